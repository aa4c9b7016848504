import { fail, type ActionFailure } from '@sveltejs/kit';
import { z } from 'zod';
import { MIN_PASSWORD_LENGTH } from './passwords';

export type FieldErrors = Record<string, string[] | undefined>;

/**
 * Parse a submitted form with a zod schema. On failure the action returns 400 with the field
 * errors and the submitted values (passwords never echoed), so each error sits next to its field.
 */
export async function parseForm<S extends z.ZodType>(
	request: Request,
	schema: S
): Promise<
	| { ok: true; data: z.infer<S> }
	| { ok: false; failure: ActionFailure<{ errors: FieldErrors; values: Record<string, string> }> }
> {
	const form = await request.formData();
	const raw: Record<string, string> = {};
	for (const [key, value] of form) if (typeof value === 'string') raw[key] = value;
	const parsed = schema.safeParse(raw);
	if (parsed.success) return { ok: true, data: parsed.data };
	const values = Object.fromEntries(
		Object.entries(raw).filter(([key]) => !key.toLowerCase().includes('password'))
	);
	const errors = z.flattenError(parsed.error).fieldErrors as FieldErrors;
	return { ok: false, failure: fail(400, { errors, values }) };
}

export const email = z
	.email('Enter an e-mail address such as name@lab.example.')
	.trim()
	.transform((e) => e.toLowerCase());

/** A failure about one field, shaped like `parseForm`'s so the page shows it beside that field. */
export function fieldFailure(status: number, field: string, message: string) {
	const errors: FieldErrors = { [field]: [message] };
	return fail(status, { errors, values: {} as Record<string, string> });
}

/**
 * A new password typed twice, with any other fields of the form. Used by the account page,
 * the password-reset link and the invitation's new-account form.
 */
export function withNewPassword<T extends z.ZodRawShape>(shape: T) {
	return z
		.object({
			...shape,
			password: z
				.string()
				.min(MIN_PASSWORD_LENGTH, `Use at least ${MIN_PASSWORD_LENGTH} characters.`)
				.max(1024),
			confirm: z.string()
		})
		.refine((v: { password?: unknown; confirm?: unknown }) => v.password === v.confirm, {
			path: ['confirm'],
			message: 'The two entries differ.'
		});
}
