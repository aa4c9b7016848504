// A local OpenID Connect issuer (oidc-provider) on 127.0.0.1: the stand-in for an institution's
// single sign-on. One confidential client, `phonotherm` (authorization code + PKCE), and the demo
// people of sso-accounts.ts. The login and consent pages are our own plain HTML: oidc-provider's
// devInteractions (and its default error and logout pages) load a web font from the internet.
import { generateKeyPairSync, randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import { join } from 'node:path';
import Provider from 'oidc-provider';
import type { Account, Interaction, KoaContextLike } from 'oidc-provider';
import { createOidcStore } from './oidc-store';
import { findSsoAccount, SSO_ACCOUNTS, SSO_INSTITUTE } from './sso-accounts';
import { assertPortFree, describeListenError, LOOPBACK } from './util';

export { SSO_ACCOUNTS, SSO_INSTITUTE } from './sso-accounts';

export const DEFAULT_OIDC_CLIENT_ID = 'phonotherm';
export const DEFAULT_OIDC_CLIENT_SECRET = 'phonotherm-local-sso-secret';

export interface OidcOptions {
	dataDir: string;
	port: number;
	/** The app's origin; the client's redirect URI is `${origin}/auth/callback/sso`. */
	origin: string;
	clientId?: string;
	clientSecret?: string;
	fresh?: boolean;
}

export interface OidcHandle {
	issuer: string;
	port: number;
	clientId: string;
	clientSecret: string;
	redirectUris: string[];
	stop(): Promise<void>;
}

/** Signing keys and cookie keys are made once and kept, so a restart does not void sessions. */
function loadOrCreateKeys(directory: string): { jwks: { keys: object[] }; cookieKeys: string[] } {
	const file = join(directory, 'keys.json');
	if (existsSync(file)) return JSON.parse(readFileSync(file, 'utf8'));
	const { privateKey } = generateKeyPairSync('rsa', { modulusLength: 2048 });
	const jwk = {
		...privateKey.export({ format: 'jwk' }),
		kid: randomBytes(8).toString('hex'),
		use: 'sig',
		alg: 'RS256'
	};
	const keys = { jwks: { keys: [jwk] }, cookieKeys: [randomBytes(32).toString('base64url')] };
	writeFileSync(file, JSON.stringify(keys), { mode: 0o600 });
	return keys;
}

const escapeHtml = (value: unknown): string =>
	String(value ?? '').replace(
		/[&<>"']/g,
		(c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c
	);

function page(title: string, body: string): string {
	return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)} · ${escapeHtml(SSO_INSTITUTE)}</title>
<style>
	body { font-family: system-ui, sans-serif; background: #f3f4f1; color: #1c2321; margin: 0; }
	main { max-width: 24rem; margin: 4rem auto; background: #fff; border: 1px solid #d5d9d4;
		border-radius: 6px; padding: 1.5rem 2rem 2rem; }
	.org { font-size: .8rem; letter-spacing: .06em; text-transform: uppercase; color: #5a6461; margin: 0; }
	h1 { font-size: 1.3rem; margin: .25rem 0 1.25rem; }
	label { display: block; font-weight: 600; margin: 1rem 0 .3rem; }
	input { box-sizing: border-box; width: 100%; padding: .5rem .6rem; font-size: 1rem;
		border: 1px solid #8c9591; border-radius: 4px; }
	input:focus, button:focus, a:focus { outline: 3px solid #2f6f5e; outline-offset: 1px; }
	button { margin-top: 1.5rem; width: 100%; padding: .6rem; font-size: 1rem; font-weight: 600;
		color: #fff; background: #2f6f5e; border: 0; border-radius: 4px; cursor: pointer; }
	button.secondary { background: #fff; color: #2f6f5e; border: 1px solid #2f6f5e; margin-top: .6rem; }
	.error { color: #8a1c1c; background: #fbeaea; border: 1px solid #e2b4b4; border-radius: 4px; padding: .5rem .75rem; }
	.note { font-size: .85rem; color: #5a6461; margin-top: 1.5rem; }
	a { color: #2f6f5e; }
</style>
</head>
<body><main>
<p class="org">${escapeHtml(SSO_INSTITUTE)}</p>
${body}
</main></body>
</html>`;
}

function loginPage(uid: string, clientName: string, email = '', error?: string): string {
	return page(
		'Sign in',
		`<h1>Sign in to continue to ${escapeHtml(clientName)}</h1>
${error ? `<p class="error" role="alert" id="login-error">${escapeHtml(error)}</p>` : ''}
<form method="post" action="/interaction/${escapeHtml(uid)}/login" novalidate>
	<label for="email">Email</label>
	<input id="email" name="email" type="email" autocomplete="username" required value="${escapeHtml(email)}"
		${error ? 'aria-describedby="login-error"' : ''} ${email ? '' : 'autofocus'}>
	<label for="password">Password</label>
	<input id="password" name="password" type="password" autocomplete="current-password" required ${email ? 'autofocus' : ''}>
	<button type="submit">Sign in</button>
</form>
<p class="note">Local single sign-on stand-in for development and tests. <a href="/interaction/${escapeHtml(uid)}/abort">Cancel</a></p>`
	);
}

function consentPage(uid: string, clientName: string, scopes: string[]): string {
	return page(
		'Allow access',
		`<h1>Allow ${escapeHtml(clientName)} to use your institute account?</h1>
<p>It asks for: ${scopes.map((s) => `<code>${escapeHtml(s)}</code>`).join(', ')}</p>
<form method="post" action="/interaction/${escapeHtml(uid)}/consent">
	<button type="submit">Allow</button>
</form>
<form method="get" action="/interaction/${escapeHtml(uid)}/abort">
	<button type="submit" class="secondary">Cancel</button>
</form>`
	);
}

async function readForm(req: IncomingMessage): Promise<URLSearchParams> {
	const chunks: Buffer[] = [];
	let size = 0;
	for await (const chunk of req) {
		size += (chunk as Buffer).length;
		if (size > 64 * 1024) throw new Error('form too large');
		chunks.push(chunk as Buffer);
	}
	return new URLSearchParams(Buffer.concat(chunks).toString('utf8'));
}

function sendHtml(res: ServerResponse, status: number, html: string) {
	res.writeHead(status, {
		'content-type': 'text/html; charset=utf-8',
		'cache-control': 'no-store',
		'content-security-policy':
			"default-src 'none'; style-src 'unsafe-inline'; form-action 'self' http: https:"
	});
	res.end(html);
}

export async function startOidc(options: OidcOptions): Promise<OidcHandle> {
	const directory = join(options.dataDir, 'oidc');
	if (options.fresh) rmSync(directory, { recursive: true, force: true });
	mkdirSync(directory, { recursive: true });
	if (options.port !== 0) await assertPortFree(options.port, 'the OIDC issuer');

	const clientId = options.clientId ?? DEFAULT_OIDC_CLIENT_ID;
	const clientSecret = options.clientSecret ?? DEFAULT_OIDC_CLIENT_SECRET;
	const origins = new Set([options.origin.replace(/\/$/, '')]);
	// The same app is often opened as localhost as well as 127.0.0.1.
	for (const origin of [...origins]) {
		const url = new URL(origin);
		if (url.hostname === '127.0.0.1') origins.add(origin.replace('127.0.0.1', 'localhost'));
		if (url.hostname === 'localhost') origins.add(origin.replace('localhost', '127.0.0.1'));
	}
	const redirectUris = [...origins].map((origin) => `${origin}/auth/callback/sso`);
	const { jwks, cookieKeys } = loadOrCreateKeys(directory);

	// The issuer needs its port before it is constructed; with port 0 let the kernel choose first.
	const http = createServer();
	const port = await new Promise<number>((resolve, reject) => {
		http.once('error', (error) =>
			reject(describeListenError(error, options.port, 'the OIDC issuer'))
		);
		http.listen(options.port, LOOPBACK, () => {
			const address = http.address();
			resolve(typeof address === 'object' && address ? address.port : options.port);
		});
	});
	const issuer = `http://${LOOPBACK}:${port}`;

	const provider = new Provider(issuer, {
		clients: [
			{
				client_id: clientId,
				client_secret: clientSecret,
				client_name: 'Phonotherm',
				redirect_uris: redirectUris,
				post_logout_redirect_uris: [...origins].map((origin) => `${origin}/`),
				response_types: ['code'],
				grant_types: ['authorization_code'],
				token_endpoint_auth_method: 'client_secret_basic'
			}
		],
		claims: {
			openid: ['sub'],
			email: ['email', 'email_verified'],
			profile: ['name', 'given_name', 'family_name']
		},
		// Put the scope's claims (email, name) into the id_token, not only into userinfo.
		conformIdTokenClaims: false,
		pkce: { required: () => true },
		features: {
			devInteractions: { enabled: false },
			rpInitiatedLogout: { enabled: true, ...logoutPages }
		},
		interactions: {
			url: (_ctx: unknown, interaction: Interaction) => `/interaction/${interaction.uid}`
		},
		adapter: createOidcStore(),
		cookies: { keys: cookieKeys },
		jwks,
		ttl: {
			AccessToken: 3600,
			AuthorizationCode: 600,
			IdToken: 3600,
			Interaction: 3600,
			Session: 14 * 24 * 3600,
			Grant: 14 * 24 * 3600
		},
		async findAccount(_ctx: unknown, sub: string): Promise<Account | undefined> {
			const person = SSO_ACCOUNTS.find((account) => account.sub === sub);
			if (!person) return undefined;
			return {
				accountId: sub,
				claims: () => ({
					sub,
					email: person.email,
					email_verified: true,
					name: person.name,
					given_name: person.givenName,
					family_name: person.familyName
				})
			};
		},
		async renderError(ctx: KoaContextLike, out: Record<string, unknown>) {
			ctx.type = 'html';
			ctx.body = page(
				'Sign-in problem',
				`<h1>Sign-in could not continue</h1>${Object.entries(out)
					.map(([key, value]) => `<p><strong>${escapeHtml(key)}</strong>: ${escapeHtml(value)}</p>`)
					.join('')}`
			);
		}
	});
	provider.on('server_error', (_ctx, error) => console.error('oidc issuer:', error));

	const handleProvider = provider.callback();
	const clientName = async (id: string) => (await provider.Client.find(id))?.clientName ?? id;

	async function interaction(
		req: IncomingMessage,
		res: ServerResponse,
		uid: string,
		action?: string
	) {
		let details: Interaction;
		try {
			details = await provider.interactionDetails(req, res);
		} catch {
			return sendHtml(
				res,
				400,
				page(
					'Sign-in expired',
					'<h1>This sign-in request has expired</h1><p>Go back to the application and start signing in again.</p>'
				)
			);
		}
		if (details.uid !== uid)
			return sendHtml(res, 400, page('Sign-in problem', '<h1>Unknown sign-in request</h1>'));
		const name = await clientName(details.params.client_id);

		if (action === 'abort') {
			return provider.interactionFinished(
				req,
				res,
				{ error: 'access_denied', error_description: 'The person cancelled the sign-in.' },
				{ mergeWithLastSubmission: false }
			);
		}
		if (details.prompt.name === 'login') {
			if (req.method === 'POST' && action === 'login') {
				const form = await readForm(req);
				const email = form.get('email') ?? '';
				const person = findSsoAccount(email);
				if (!person || person.password !== (form.get('password') ?? '')) {
					// One message for both cases, so the page does not reveal who has an account.
					return sendHtml(
						res,
						401,
						loginPage(uid, name, email, 'Email or password is not correct.')
					);
				}
				return provider.interactionFinished(
					req,
					res,
					{ login: { accountId: person.sub } },
					{ mergeWithLastSubmission: false }
				);
			}
			return sendHtml(res, 200, loginPage(uid, name, details.params.login_hint ?? ''));
		}
		if (details.prompt.name === 'consent') {
			const firstParty = details.params.client_id === clientId;
			if (!firstParty && !(req.method === 'POST' && action === 'consent')) {
				const scopes = details.prompt.details.missingOIDCScope ?? [];
				return sendHtml(res, 200, consentPage(uid, name, scopes));
			}
			// Phonotherm is the institute's own client: consent is implied, as institutional SSO does.
			const grant = details.grantId
				? await provider.Grant.find(details.grantId)
				: new provider.Grant({
						accountId: details.session?.accountId,
						clientId: details.params.client_id
					});
			if (!grant) throw new Error('grant not found');
			const { missingOIDCScope, missingOIDCClaims, missingResourceScopes } = details.prompt.details;
			if (missingOIDCScope) grant.addOIDCScope(missingOIDCScope.join(' '));
			if (missingOIDCClaims) grant.addOIDCClaims(missingOIDCClaims);
			for (const [indicator, scopes] of Object.entries(missingResourceScopes ?? {})) {
				grant.addResourceScope(indicator, scopes.join(' '));
			}
			return provider.interactionFinished(
				req,
				res,
				{ consent: { grantId: await grant.save() } },
				{ mergeWithLastSubmission: true }
			);
		}
		return sendHtml(
			res,
			501,
			page('Sign-in problem', `<h1>Unsupported step ${escapeHtml(details.prompt.name)}</h1>`)
		);
	}

	http.on('request', (req: IncomingMessage, res: ServerResponse) => {
		const match = /^\/interaction\/([A-Za-z0-9_-]+)(?:\/(login|consent|abort))?\/?$/.exec(
			new URL(req.url ?? '/', issuer).pathname
		);
		if (!match) return handleProvider(req, res);
		interaction(req, res, match[1], match[2]).catch((error: unknown) => {
			console.error('oidc issuer interaction:', error);
			if (!res.headersSent)
				sendHtml(res, 500, page('Sign-in problem', '<h1>Something went wrong</h1>'));
			else res.end();
		});
	});

	return {
		issuer,
		port,
		clientId,
		clientSecret,
		redirectUris,
		stop: () =>
			new Promise<void>((resolve) => {
				http.close(() => resolve());
				http.closeAllConnections();
			})
	};
}

/** Our own logout pages: the defaults load a web font from the internet. */
const logoutPages = {
	async logoutSource(ctx: KoaContextLike, form: string) {
		ctx.type = 'html';
		ctx.body = page(
			'Sign out',
			`<h1>Sign out of the institute account?</h1>${form}
<button autofocus type="submit" form="op.logoutForm" value="yes" name="logout">Yes, sign me out</button>
<button type="submit" form="op.logoutForm" class="secondary">No, stay signed in</button>`
		);
	},
	async postLogoutSuccessSource(ctx: KoaContextLike) {
		ctx.type = 'html';
		ctx.body = page('Signed out', '<h1>You are signed out of the institute account.</h1>');
	}
};
