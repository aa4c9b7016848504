// HTTP helpers for tests that talk to the running app the way a browser or an acquisition PC does.

export const APP_URL = process.env.APP_URL ?? 'http://127.0.0.1:3000';
export const MAIL_CATCHER_URL = process.env.MAIL_CATCHER_URL ?? '';

/** A minimal cookie jar: enough for Auth.js's session cookie. */
export class Session {
	private cookies = new Map<string, string>();

	header(): string {
		return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
	}

	take(response: Response) {
		for (const line of response.headers.getSetCookie()) {
			const [pair] = line.split(';');
			const eq = pair.indexOf('=');
			const name = pair.slice(0, eq).trim();
			const value = pair.slice(eq + 1).trim();
			if (value === '' || /max-age=0/i.test(line)) this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
	}

	has(name: string) {
		return this.cookies.has(name);
	}

	async get(path: string): Promise<Response> {
		const response = await fetch(APP_URL + path, {
			headers: { cookie: this.header() },
			redirect: 'manual'
		});
		this.take(response);
		return response;
	}

	/** Submit a form the way a browser without JavaScript does (SvelteKit checks the Origin). */
	async post(path: string, fields: Record<string, string> = {}): Promise<Response> {
		const response = await fetch(APP_URL + path, {
			method: 'POST',
			headers: {
				cookie: this.header(),
				origin: APP_URL,
				accept: 'text/html',
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: new URLSearchParams(fields),
			redirect: 'manual'
		});
		this.take(response);
		return response;
	}
}

export async function signIn(email: string, password: string): Promise<Session> {
	const session = new Session();
	const response = await session.post('/signin', {
		providerId: 'credentials',
		email,
		password,
		redirectTo: '/projects'
	});
	if (response.status >= 400 || !session.has('authjs.session-token')) {
		throw new Error(`sign-in as ${email} failed with ${response.status}`);
	}
	return session;
}

export interface CaughtMail {
	id: string;
	to: string[];
	subject: string;
	text: string;
}

/** Wait for the newest message to an address in the local mail catcher. */
export async function waitForMail(to: string, since = 0, timeoutMs = 10_000): Promise<CaughtMail> {
	const deadline = Date.now() + timeoutMs;
	while (Date.now() < deadline) {
		const list = (await (await fetch(`${MAIL_CATCHER_URL}/messages`)).json()) as {
			id: string;
			to: string[];
			date: string;
		}[];
		const hit = list.find((m) => m.to.includes(to) && new Date(m.date).getTime() >= since - 1000);
		if (hit)
			return (await (await fetch(`${MAIL_CATCHER_URL}/messages/${hit.id}`)).json()) as CaughtMail;
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`no mail to ${to} arrived within ${timeoutMs} ms`);
}

export function linkIn(text: string, path: string): string {
	const match = new RegExp(`https?://\\S+${path}/\\S+`).exec(text);
	if (!match) throw new Error(`no ${path} link in: ${text}`);
	return match[0];
}
