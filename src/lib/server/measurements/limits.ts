/** Upload limits, each refused with a problem that says what to change. */
export const MAX_FILE_BYTES = 16 * 1024 * 1024;
export const MAX_REQUEST_BYTES = 4 * MAX_FILE_BYTES + 1024 * 1024;
/** API requests per token per minute (shared by all app processes through the database). */
export const TOKEN_REQUESTS_PER_MINUTE = Number(process.env.TOKEN_REQUESTS_PER_MINUTE ?? 600);
