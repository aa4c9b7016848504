import { lt, sql } from 'drizzle-orm';
import { db } from './db';
import { tokenRequestCounts } from './db/schema';
import { TOKEN_REQUESTS_PER_MINUTE } from './measurements/limits';
import { problem } from './problem';

/**
 * Count a token's request in the current minute; refuse with 429 past the limit. The counter is
 * a row per token and minute, so every app process shares it.
 */
export async function countTokenRequest(tokenId: number, limit = TOKEN_REQUESTS_PER_MINUTE) {
	const now = Date.now();
	const windowStart = new Date(now - (now % 60_000));
	const [row] = await db
		.insert(tokenRequestCounts)
		.values({ tokenId, windowStart, count: 1 })
		.onConflictDoUpdate({
			target: [tokenRequestCounts.tokenId, tokenRequestCounts.windowStart],
			set: { count: sql`${tokenRequestCounts.count} + 1` }
		})
		.returning({ count: tokenRequestCounts.count });
	if (row.count > limit) {
		const retryAfter = Math.ceil((windowStart.getTime() + 60_000 - now) / 1000);
		const p = problem(
			429,
			`This token made more than ${limit} requests in a minute. Wait ${retryAfter} s, or spread the uploads out (or give each acquisition PC its own token).`,
			{ limit_per_minute: limit }
		);
		Object.assign(p.headers, { 'retry-after': String(retryAfter) });
		throw p;
	}
}

/** Drop counters older than an hour; workers call this now and then. */
export async function pruneRequestCounts() {
	await db
		.delete(tokenRequestCounts)
		.where(lt(tokenRequestCounts.windowStart, new Date(Date.now() - 3600_000)));
}
