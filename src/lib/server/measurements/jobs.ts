import { and, eq, inArray, lt } from 'drizzle-orm';
import { db } from '../db';
import { analyses } from '../db/schema';
import { ANALYSIS_QUEUE, queue } from '../queue';

export interface AnalysisJob {
	analysisId: string;
}

/** A job that outlives this without finishing belongs to a dead worker and is handed on. */
export const JOB_EXPIRE_SECONDS = Number(process.env.JOB_EXPIRE_SECONDS ?? 120);

export async function enqueueAnalysis(analysisId: string): Promise<string | null> {
	try {
		const boss = await queue();
		return await boss.send(ANALYSIS_QUEUE, { analysisId } satisfies AnalysisJob, {
			// One live job per analysis, however often it is re-sent.
			singletonKey: analysisId,
			retryLimit: 4,
			retryDelay: 5,
			retryBackoff: true,
			expireInSeconds: JOB_EXPIRE_SECONDS
		});
	} catch (err) {
		// The analysis row is committed and stays queued; the sweep below sends it again.
		console.error('queue: could not send analysis', analysisId, (err as Error).message);
		return null;
	}
}

/**
 * Re-send analyses that are queued or analysing but have no live job (the send failed, or the
 * job ran out of retries while storage was down). Workers run this when they start and then
 * now and then; the singleton key keeps it from doubling a live job.
 */
export async function sweepStrandedAnalyses(olderThanSeconds = JOB_EXPIRE_SECONDS * 2) {
	const cutoff = new Date(Date.now() - olderThanSeconds * 1000);
	const stranded = await db
		.select({ id: analyses.id })
		.from(analyses)
		.where(and(inArray(analyses.status, ['queued', 'analysing']), lt(analyses.updatedAt, cutoff)))
		.limit(500);
	for (const { id } of stranded) await enqueueAnalysis(id);
	return stranded.length;
}

export async function analysisStatus(id: string) {
	const row = await db.query.analyses.findFirst({ where: eq(analyses.id, id) });
	return row?.status ?? null;
}
