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
	for (let i = 0; i < concurrency; i++) {
		ids.push(
			await boss.work<AnalysisJob>(
				ANALYSIS_QUEUE,
				{ pollingIntervalSeconds: 0.5, batchSize: 1 },
				async ([job]) => {
					const outcome = await runAnalysis(job.data.analysisId);
					log(`worker: analysis ${job.data.analysisId} ${outcome}`);
					return { outcome };
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
