import PgBoss from 'pg-boss';
import { env } from './env';

// The queue name can be changed so that a test can run a private queue beside the real one.
export const ANALYSIS_QUEUE = process.env.ANALYSIS_QUEUE ?? 'analyse-measurement';

let started: Promise<PgBoss> | undefined;

/** The PostgreSQL-backed job queue, started once per process with its queues created. */
export function queue(): Promise<PgBoss> {
	started ??= (async () => {
		const boss = new PgBoss({
			connectionString: env().DATABASE_URL,
			schema: 'pgboss',
			max: 4,
			// How often expired jobs (their worker died) are put back for another worker.
			maintenanceIntervalSeconds: Number(process.env.QUEUE_MAINTENANCE_SECONDS ?? 30)
		});
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
