// A worker that dies mid-job leaves a job another worker finishes, with exactly one reading
// (issue 4 item 4). The test takes the job off the queue itself and never finishes it — what a
// killed worker leaves behind — then starts a real worker process (`scripts/worker.ts`) on a
// private queue and waits for it to take the job over after it expires.
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { si532Ingest } from './support/pairs';

const ROOT = join(import.meta.dirname, '..');
const QUEUE = `analyse-test-${randomBytes(4).toString('hex')}`;
process.env.ANALYSIS_QUEUE = QUEUE;
process.env.JOB_EXPIRE_SECONDS = '2';
process.env.QUEUE_MAINTENANCE_SECONDS = '1';

const { db, closeDb } = await import('../src/lib/server/db');
const { analyses, readings } = await import('../src/lib/server/db/schema');
const { ingestMeasurement } = await import('../src/lib/server/measurements/ingest');
const { enqueueAnalysis } = await import('../src/lib/server/measurements/jobs');
const { queue, stopQueue } = await import('../src/lib/server/queue');
const { makeWorld } = await import('./support/world');

const workers: ChildProcess[] = [];
function startWorkerProcess(): Promise<ChildProcess> {
	const child = spawn(join(ROOT, 'node_modules', '.bin', 'tsx'), ['scripts/worker.ts'], {
		cwd: ROOT,
		env: {
			...process.env,
			ANALYSIS_QUEUE: QUEUE,
			QUEUE_MAINTENANCE_SECONDS: '1',
			WORKER_CONCURRENCY: '1'
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	workers.push(child);
	return new Promise((resolve, reject) => {
		child.stdout!.on('data', (d) => String(d).includes('worker: ready') && resolve(child));
		child.once('exit', (code) => reject(new Error(`worker exited early (${code})`)));
	});
}

async function until<T>(probe: () => Promise<T | undefined>, timeoutMs = 60_000): Promise<T> {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const value = await probe();
		if (value !== undefined) return value;
		if (Date.now() > deadline) throw new Error('timed out');
		await new Promise((r) => setTimeout(r, 250));
	}
}

let measurementId: string;
let analysisId: string;

beforeAll(async () => {
	const world = await makeWorld('handover');
	const { measurement } = await ingestMeasurement({
		projectId: world.project.id,
		actor: {},
		...si532Ingest()
	});
	measurementId = measurement.id;
	const [row] = await db.select().from(analyses).where(eq(analyses.measurementId, measurementId));
	analysisId = row.id;
});

afterAll(async () => {
	for (const w of workers) w.kill('SIGKILL');
	await stopQueue();
	await closeDb();
});

describe('a worker dies mid-job', () => {
	it('another worker finishes it, and exactly one reading results', async () => {
		const boss = await queue();
		// The dying worker: takes the job and starts the analysis, then is gone.
		const [job] = await boss.fetch<{ analysisId: string }>(QUEUE);
		expect(job.data.analysisId).toBe(analysisId);
		await db
			.update(analyses)
			.set({ status: 'analysing', attempts: 1 })
			.where(eq(analyses.id, analysisId));

		const worker = await startWorkerProcess();
		const finished = await until(async () => {
			const [a] = await db.select().from(analyses).where(eq(analyses.id, analysisId));
			return a.status === 'done' ? a : undefined;
		});
		// The expired job and the stranded-analysis sweep may both hand it on; either way it ran again.
		expect(finished.attempts).toBeGreaterThanOrEqual(2);
		let rows = await db.select().from(readings).where(eq(readings.measurementId, measurementId));
		expect(rows).toHaveLength(1);
		expect(rows[0].temperatureK).toBeGreaterThan(300);

		// Kill that worker too, send the job again (as the stranded-job sweep would) and let a
		// fresh worker run it: the analysis is done, so no second reading appears.
		worker.kill('SIGKILL');
		const again = await enqueueAnalysis(analysisId);
		expect(again).toBeTruthy();
		await startWorkerProcess();
		const state = await until(async () => {
			const j = await boss.getJobById(QUEUE, again!);
			return j && ['completed', 'failed'].includes(j.state) ? j : undefined;
		}, 30_000);
		expect(state.state).toBe('completed');
		rows = await db.select().from(readings).where(eq(readings.measurementId, measurementId));
		expect(rows).toHaveLength(1);
	});
});
