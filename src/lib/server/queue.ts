import PgBoss from 'pg-boss';
import { env } from './env';

export const ANALYSIS_QUEUE = 'analyse-measurement';

let started: Promise<PgBoss> | undefined;

/** The PostgreSQL-backed job queue, started once per process with its queues created. */
export function queue(): Promise<PgBoss> {
	started ??= (async () => {
		const boss = new PgBoss({ connectionString: env().DATABASE_URL, schema: 'pgboss' });
		boss.on('error', (err) => console.error('queue:', err.message));
		await boss.start();
		// pg-boss 10 silently drops jobs sent to a queue that was never created.
		await boss.createQueue(ANALYSIS_QUEUE);
		return boss;
	})().catch((err) => {
		started = undefined;
		throw err;
	});
	return started;
}

export async function pingQueue(): Promise<boolean> {
	try {
		const boss = await queue();
		return (await boss.getQueue(ANALYSIS_QUEUE)) !== null;
	} catch {
		return false;
	}
}

export async function stopQueue() {
	if (started) await (await started).stop({ graceful: true, wait: true, timeout: 10_000 });
	started = undefined;
}
