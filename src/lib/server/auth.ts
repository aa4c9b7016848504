import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { SvelteKitAuth, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import type { Provider } from '@auth/sveltekit/providers';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { db, getDb } from './db';
import { accounts, sessions, users, verificationTokens } from './db/schema';
import { env } from './env';
import { verifyPassword } from './passwords';

export const SSO_PROVIDER_ID = 'sso';

const credentialsInput = z.object({
	email: z.email().transform((e) => e.toLowerCase()),
	password: z.string().min(1).max(1024)
});

function providers(): Provider[] {
	const list: Provider[] = [
		Credentials({
			credentials: {
				email: { label: 'E-mail' },
				password: { label: 'Password', type: 'password' }
			},
			async authorize(raw) {
				const input = credentialsInput.safeParse(raw);
				if (!input.success) return null;
				const user = await db.query.users.findFirst({ where: eq(users.email, input.data.email) });
				const ok = await verifyPassword(user?.passwordHash ?? null, input.data.password);
				return ok && user ? { id: user.id, email: user.email, name: user.name } : null;
			}
		})
	];
	const e = env();
	if (e.OIDC_ISSUER && e.OIDC_CLIENT_ID && e.OIDC_CLIENT_SECRET) {
		list.push({
			id: SSO_PROVIDER_ID,
			name: e.OIDC_NAME,
			type: 'oidc',
			issuer: e.OIDC_ISSUER,
			clientId: e.OIDC_CLIENT_ID,
			clientSecret: e.OIDC_CLIENT_SECRET,
			checks: ['pkce', 'state'],
			// The institution's identity provider vouches for the address, so an invited person who
			// first set a password can later use single sign-on for the same account.
			allowDangerousEmailAccountLinking: true
		});
	}
	return list;
}

export const ssoConfigured = () => {
	const e = env();
	return Boolean(e.OIDC_ISSUER && e.OIDC_CLIENT_ID && e.OIDC_CLIENT_SECRET);
};

export const {
	handle: authHandle,
	signIn,
	signOut
} = SvelteKitAuth(
	async () =>
		({
			adapter: DrizzleAdapter(getDb(), {
				usersTable: users,
				accountsTable: accounts,
				sessionsTable: sessions,
				verificationTokensTable: verificationTokens
			}),
			providers: providers(),
			secret: env().AUTH_SECRET,
			trustHost: true,
			// Credentials sign-in requires JWT sessions; the user row is re-read on every request.
			session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
			pages: { signIn: '/signin', error: '/signin' },
			callbacks: {
				jwt({ token, user }) {
					if (user?.id) token.sub = user.id;
					return token;
				},
				session({ session, token }) {
					if (token.sub) session.user.id = token.sub;
					return session;
				}
			}
		}) satisfies SvelteKitAuthConfig
);
