import type PgBoss from 'pg-boss';
import { ANALYSIS_QUEUE, queue } from '../queue';
import { sweepStrandedAnalyses, type AnalysisJob } from '../measurements/jobs';
import { pruneRequestCounts } from '../ratelimit';
import { runAnalysis } from './analyse';

/**
 * Start analysing queued measurements in this process. Any number of processes, on this
 * machine or others, may run this against the same database and bucket: the queue hands each
 * job to one of them, and a job whose worker dies is handed on after it expires.
 */
export async function startWorker(
	options: { concurrency?: number; log?: (line: string) => void } = {}
) {
	const log = options.log ?? ((line: string) => console.log(line));
	const boss: PgBoss = await queue();
	const concurrency = options.concurrency ?? 2;
	const ids: string[] = [];
	// Each poll takes up to a few jobs at once: pg-boss waits the polling interval between
	// fetches, so one job per fetch would cap a worker at two analyses a second.
	for (let i = 0; i < concurrency; i++) {
		ids.push(
			await boss.work<AnalysisJob>(
				ANALYSIS_QUEUE,
				{ pollingIntervalSeconds: 0.5, batchSize: 4 },
				async (jobs) => {
					await Promise.all(
						jobs.map(async (job) => {
							try {
								const outcome = await runAnalysis(job.data.analysisId);
								// A job for an analysis already finished (seeded, or handed on twice) is no news.
								if (outcome !== 'skipped')
									log(`worker: analysis ${job.data.analysisId} ${outcome}`);
							} catch (err) {
								// Only this job goes back for a retry with backoff; the others complete.
								log(
									`worker: analysis ${job.data.analysisId} will be retried: ${(err as Error).message}`
								);
								await boss.fail(ANALYSIS_QUEUE, job.id, { message: (err as Error).message });
							}
						})
					);
				}
			)
		);
	}
	const sweep = async () => {
		try {
			await pruneRequestCounts();
			const n = await sweepStrandedAnalyses();
			if (n) log(`worker: re-sent ${n} stranded analyses`);
		} catch (err) {
			log(`worker: sweep failed: ${(err as Error).message}`);
		}
	};
	await sweep();
	const timer = setInterval(sweep, 60_000);
	timer.unref();
	return {
		stop: async () => {
			clearInterval(timer);
			for (const id of ids) await boss.offWork({ id });
		}
	};
}
