import { eq } from 'drizzle-orm';
import type { ReanalysisSettings } from '../../measurement-metadata';
import { recordAudit, type Actor } from '../audit';
import { db } from '../db';
import { analyses, measurements } from '../db/schema';
import { enqueueAnalysis } from './jobs';

/**
 * Queue a new analysis of a stored measurement with some settings changed. It makes a new
 * reading; the earlier readings stay as they are.
 */
export async function requestReanalysis(
	projectId: number,
	measurementId: string,
	changes: ReanalysisSettings,
	actor: Actor
): Promise<string | null> {
	const id = await db.transaction(async (tx) => {
		const m = await tx.query.measurements.findFirst({ where: eq(measurements.id, measurementId) });
		if (!m || m.projectId !== projectId) return null;
		const settings = { ...m.metadata, ...changes };
		const [analysis] = await tx
			.insert(analyses)
			.values({
				measurementId,
				settings,
				requestedBy: actor.userId ?? null,
				requestedByToken: actor.tokenId ?? null
			})
			.returning({ id: analyses.id });
		await tx
			.update(measurements)
			.set({ status: 'queued' })
			.where(eq(measurements.id, measurementId));
		await recordAudit(tx, {
			projectId,
			actor,
			action: 'measurement.reanalyse',
			objectType: 'measurement',
			objectId: measurementId,
			before: Object.fromEntries(
				Object.keys(changes).map((k) => [k, m.metadata[k as keyof typeof m.metadata]])
			),
			after: changes
		});
		return analysis.id;
	});
	if (id) await enqueueAnalysis(id);
	return id;
}
