import { z } from 'zod';

/**
 * The server's configuration, validated once. Every service can be a local stand-in (what
 * `npm start` runs) or a real one; `.env.example` lists the variables. Read lazily, because the
 * build imports server modules without any of them set.
 */
const schema = z.object({
	DATABASE_URL: z.url({ protocol: /^postgres(ql)?$/ }),
	S3_ENDPOINT: z.url(),
	S3_REGION: z.string().min(1).default('us-east-1'),
	S3_BUCKET: z.string().min(3),
	S3_ACCESS_KEY_ID: z.string().min(1),
	S3_SECRET_ACCESS_KEY: z.string().min(1),
	S3_FORCE_PATH_STYLE: z
		.enum(['true', 'false'])
		.default('true')
		.transform((v) => v === 'true'),
	SMTP_URL: z.url({ protocol: /^smtps?$/ }),
	MAIL_FROM: z.string().min(3).default('Phonotherm <phonotherm@localhost>'),
	/** Only for the local catcher: enables the developer mailbox page. */
	MAIL_CATCHER_URL: z.url().optional(),
	OIDC_ISSUER: z.url().optional(),
	OIDC_CLIENT_ID: z.string().min(1).optional(),
	OIDC_CLIENT_SECRET: z.string().min(1).optional(),
	OIDC_NAME: z.string().min(1).default('Institute single sign-on'),
	AUTH_SECRET: z.string().min(16),
	ORIGIN: z.url()
});

export type Env = z.infer<typeof schema>;

let cached: Env | undefined;

export function env(): Env {
	if (cached) return cached;
	const parsed = schema.safeParse(process.env);
	if (!parsed.success) {
		const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
		throw new Error(`Phonotherm's configuration is incomplete:\n${lines.join('\n')}`);
	}
	cached = parsed.data;
	return cached;
}
