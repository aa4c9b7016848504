// The local single sign-on issuer runs the whole authorization-code + PKCE flow through its own
// login page, skips consent for Phonotherm, and puts the e-mail address into the id_token.
import { createHash, randomBytes } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { SSO_ACCOUNTS } from '../scripts/services/sso-accounts';

function required(name: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`${name} is not set; run the tests with \`npm test\``);
	return value;
}

/** Just enough of a browser: follows nothing by itself and keeps the issuer's cookies. */
function browser() {
	const jar = new Map<string, string>();
	return async (url: string, init: RequestInit = {}) => {
		const response = await fetch(url, {
			...init,
			redirect: 'manual',
			headers: { ...init.headers, cookie: [...jar].map(([k, v]) => `${k}=${v}`).join('; ') }
		});
		for (const cookie of response.headers.getSetCookie()) {
			const [pair] = cookie.split(';');
			const at = pair.indexOf('=');
			jar.set(pair.slice(0, at), pair.slice(at + 1));
		}
		return response;
	};
}

const base64url = (buffer: Buffer) => buffer.toString('base64url');

async function signIn(email: string, password: string) {
	const issuer = required('OIDC_ISSUER');
	const clientId = required('OIDC_CLIENT_ID');
	const redirectUri = `${required('ORIGIN')}/auth/callback/sso`;
	const verifier = base64url(randomBytes(32));
	const challenge = base64url(createHash('sha256').update(verifier).digest());
	const state = base64url(randomBytes(8));
	const go = browser();

	const authorize = new URL(`${issuer}/auth`);
	authorize.search = new URLSearchParams({
		client_id: clientId,
		response_type: 'code',
		scope: 'openid email profile',
		redirect_uri: redirectUri,
		state,
		code_challenge: challenge,
		code_challenge_method: 'S256'
	}).toString();

	let response = await go(authorize.href);
	expect(response.status).toBe(303);
	const loginUrl = new URL(response.headers.get('location') ?? '', issuer).href;
	response = await go(loginUrl);
	const html = await response.text();
	expect(html).toContain('<label for="email">Email</label>');
	expect(html).toContain('<label for="password">Password</label>');
	expect(html).toContain('>Sign in</button>');
	expect(html).not.toMatch(/https?:\/\/(?!127\.0\.0\.1)[^"'\s]+\.(css|woff2?)/);

	const action = /action="([^"]+)"/.exec(html)?.[1] ?? '';
	response = await go(new URL(action, issuer).href, {
		method: 'POST',
		headers: { 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ email, password }).toString()
	});
	if (response.status !== 303) return { status: response.status, body: await response.text() };

	// Resume, skip consent, resume again: at most a handful of redirects inside the issuer.
	let location = new URL(response.headers.get('location') ?? '', issuer);
	for (let hop = 0; hop < 6 && location.origin === new URL(issuer).origin; hop++) {
		response = await go(location.href);
		location = new URL(response.headers.get('location') ?? '', issuer);
	}
	expect(location.href.startsWith(redirectUri)).toBe(true);
	expect(location.searchParams.get('state')).toBe(state);
	const code = location.searchParams.get('code') ?? '';

	const token = await fetch(`${issuer}/token`, {
		method: 'POST',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			authorization: `Basic ${Buffer.from(`${clientId}:${required('OIDC_CLIENT_SECRET')}`).toString('base64')}`
		},
		body: new URLSearchParams({
			grant_type: 'authorization_code',
			code,
			redirect_uri: redirectUri,
			code_verifier: verifier
		}).toString()
	});
	expect(token.status).toBe(200);
	const tokens = (await token.json()) as { id_token: string; access_token: string };
	const claims = JSON.parse(Buffer.from(tokens.id_token.split('.')[1], 'base64url').toString());
	return { status: 200, claims };
}

describe('local single sign-on issuer', () => {
	it('signs a demo institute account in and puts email and name into the id_token', async () => {
		const person = SSO_ACCOUNTS[0];
		const result = await signIn(person.email, person.password);
		expect(result.status).toBe(200);
		expect(result.claims).toMatchObject({
			sub: person.sub,
			email: person.email,
			email_verified: true,
			name: person.name
		});
	});

	it('refuses a wrong password with one generic message', async () => {
		const person = SSO_ACCOUNTS[1];
		const wrong = await signIn(person.email, 'not-the-password');
		const unknown = await signIn('nobody@halvorsen.example', 'whatever');
		expect(wrong.status).toBe(401);
		expect(unknown.status).toBe(401);
		expect(wrong.body).toContain('Email or password is not correct.');
		expect(unknown.body).toContain('Email or password is not correct.');
	});
});
