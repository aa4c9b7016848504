import { json } from '@sveltejs/kit';
import { pingDb } from '$lib/server/db';
import { pingMail } from '$lib/server/mail';
import { pingQueue } from '$lib/server/queue';
import { pingStorage } from '$lib/server/storage';

const within = <T>(ms: number, p: Promise<T>, fallback: T) =>
	Promise.race([p, new Promise<T>((r) => setTimeout(() => r(fallback), ms))]);

export async function GET() {
	const [database, storage, mail, queue] = await Promise.all(
		[pingDb(), pingStorage(), pingMail(), pingQueue()].map((p) => within(3000, p, false))
	);
	const checks = { database, storage, mail, queue };
	const up = Object.values(checks).every(Boolean);
	const body = Object.fromEntries(Object.entries(checks).map(([k, v]) => [k, v ? 'up' : 'down']));
	return json({ status: up ? 'up' : 'degraded', ...body }, { status: up ? 200 : 503 });
}
