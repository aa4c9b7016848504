import { GetObjectCommand } from '@aws-sdk/client-s3';
import { and, desc, eq, ne } from 'drizzle-orm';
import { analysisOptions, pairInputs } from '../../analysis-options';
import { instrumentFlags } from '../../instrument-flags';
import { analyzePairDetailed, toJson } from '../../thermometry/analyze';
import { EngineError, type Reading, type Severity } from '../../thermometry/types';
import { recordAudit } from '../audit';
import { db } from '../db';
import {
	analyses,
	calibrations,
	instrumentProfileVersions,
	measurementFiles,
	measurements,
	readings,
	type ReadingSpectra,
	type WindowForPlot
} from '../db/schema';
import { alertSeriesSubscribers } from '../series-alerts';
import { bucket, s3 } from '../storage';
import { notifyUploader } from './notify';

/** Attempts across retries and hand-overs before an analysis is failed for good. */
const MAX_ATTEMPTS = 10;

const SEVERITY_ORDER: (Severity | 'none')[] = ['none', 'info', 'warning', 'error'];

function worstSeverity(reading: Reading): Severity | 'none' {
	let worst = 0;
	for (const f of reading.flags) worst = Math.max(worst, SEVERITY_ORDER.indexOf(f.severity));
	return SEVERITY_ORDER[worst];
}

async function fetchText(key: string): Promise<string> {
	const object = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key }));
	return object.Body!.transformToString('utf-8');
}

const plotWindow = (
	w: { shift: Float64Array; rate: Float64Array; usable: Uint8Array },
	baseline?: Float64Array
): WindowForPlot => ({
	shift: Array.from(w.shift),
	rate: Array.from(w.rate),
	usable: Array.from(w.usable),
	baseline: baseline ? Array.from(baseline) : undefined
});

export type Outcome = 'done' | 'failed' | 'skipped';

/**
 * Analyse one queued analysis: load its files, run the engine, store the reading. Safe to run
 * twice for the same analysis (a retried or handed-on job): the reading is keyed by analysis.
 * Refused input fails the analysis with its reason; anything else (storage down) is thrown so
 * the queue retries with backoff.
 */
export async function runAnalysis(analysisId: string): Promise<Outcome> {
	const analysis = await db.query.analyses.findFirst({ where: eq(analyses.id, analysisId) });
	if (!analysis || analysis.status === 'done' || analysis.status === 'failed') return 'skipped';
	if (analysis.attempts >= MAX_ATTEMPTS) {
		await fail(analysisId, analysis.measurementId, {
			code: 'analysis-gave-up',
			message: `The analysis did not complete in ${MAX_ATTEMPTS} attempts (the files could not be read, or the worker kept stopping). Re-analyse the measurement once storage is reachable.`
		});
		return 'failed';
	}

	await db.transaction(async (tx) => {
		await tx
			.update(analyses)
			.set({ status: 'analysing', attempts: analysis.attempts + 1, startedAt: new Date() })
			.where(eq(analyses.id, analysisId));
		await tx
			.update(measurements)
			.set({ status: 'analysing' })
			.where(eq(measurements.id, analysis.measurementId));
	});

	const files = await db
		.select()
		.from(measurementFiles)
		.where(eq(measurementFiles.measurementId, analysis.measurementId));
	const texts = Object.fromEntries(
		await Promise.all(
			files.map(
				async (f) => [f.part, { name: f.fileName, text: await fetchText(f.objectKey) }] as const
			)
		)
	);
	const inputs = pairInputs(texts, analysis.settings);
	const options = analysisOptions(analysis.settings);

	let reading: Reading;
	let spectra: ReadingSpectra;
	try {
		const detailed = analyzePairDetailed(inputs, options);
		reading = detailed.reading;
		reading.flags.push(...(await profileFlags(analysis)));
		const pair = detailed.prepared;
		spectra = {
			stokes: plotWindow(pair.stokes.window, pair.stokes.baseline),
			anti_stokes: plotWindow(pair.antiStokes.window, pair.antiStokes.baseline)
		};
	} catch (err) {
		if (!(err instanceof EngineError)) throw err;
		await fail(analysisId, analysis.measurementId, { code: err.code, message: err.message });
		return 'failed';
	}

	const severity = worstSeverity(reading);
	const inserted = await db.transaction(async (tx) => {
		const [row] = await tx
			.insert(readings)
			.values({
				measurementId: analysis.measurementId,
				analysisId,
				temperatureK: reading.temperature_k,
				uTemperatureK: reading.u_temperature_k,
				expandedUncertaintyK: reading.expanded_uncertainty_k,
				coverageFactor: reading.coverage_factor,
				worstSeverity: severity,
				flagCodes: reading.flags.map((f) => f.code),
				engineVersion: reading.engine_version,
				result: toJson(reading),
				spectra
			})
			.onConflictDoNothing({ target: readings.analysisId })
			.returning({ id: readings.id });
		await tx
			.update(analyses)
			.set({ status: 'done', finishedAt: new Date(), failure: null })
			.where(eq(analyses.id, analysisId));
		await markMeasurement(tx, analysis.measurementId);
		if (row) {
			const project = await tx.query.measurements.findFirst({
				where: eq(measurements.id, analysis.measurementId),
				columns: { projectId: true }
			});
			await recordAudit(tx, {
				projectId: project?.projectId ?? null,
				actor: { userId: analysis.requestedBy, tokenId: analysis.requestedByToken },
				action: 'reading.create',
				objectType: 'reading',
				objectId: row.id,
				after: {
					analysis: analysisId,
					temperature_k: reading.temperature_k,
					flags: reading.flags.map((f) => f.code)
				}
			});
		}
		return row;
	});
	if (inserted) await alertSeriesSubscribers(inserted.id);
	if (inserted && severity === 'error') {
		await notifyUploader(
			analysis.measurementId,
			'error-flag',
			reading.flags.find((f) => f.severity === 'error')?.message ?? ''
		);
	}
	return 'done';
}

/** Warnings from the instrument profile version and calibration the settings came from. */
async function profileFlags(analysis: typeof analyses.$inferSelect) {
	if (analysis.profileVersionId === null) return [];
	const [row] = await db
		.select({
			version: instrumentProfileVersions,
			calibration: calibrations,
			acquiredAt: measurements.acquiredAt,
			createdAt: measurements.createdAt
		})
		.from(analyses)
		.innerJoin(measurements, eq(measurements.id, analyses.measurementId))
		.leftJoin(
			instrumentProfileVersions,
			eq(instrumentProfileVersions.id, analyses.profileVersionId)
		)
		.leftJoin(calibrations, eq(calibrations.id, analyses.calibrationId))
		.where(eq(analyses.id, analysis.id));
	return instrumentFlags({
		settings: analysis.settings,
		profile: row?.version ?? null,
		calibration: row?.calibration ?? null,
		at: row?.acquiredAt ?? row?.createdAt ?? new Date()
	});
}

/** The measurement shows its newest analysis's status. */
async function markMeasurement(tx: Pick<typeof db, 'select' | 'update'>, measurementId: string) {
	const [newest] = await tx
		.select({ status: analyses.status })
		.from(analyses)
		.where(eq(analyses.measurementId, measurementId))
		.orderBy(desc(analyses.createdAt))
		.limit(1);
	if (newest) {
		await tx
			.update(measurements)
			.set({ status: newest.status })
			.where(eq(measurements.id, measurementId));
	}
}

export async function fail(
	analysisId: string,
	measurementId: string,
	failure: { code: string; message: string }
) {
	const changed = await db.transaction(async (tx) => {
		const [row] = await tx
			.update(analyses)
			.set({ status: 'failed', failure, finishedAt: new Date() })
			.where(and(eq(analyses.id, analysisId), ne(analyses.status, 'failed')))
			.returning({ id: analyses.id });
		await markMeasurement(tx, measurementId);
		return row;
	});
	if (changed) await notifyUploader(measurementId, 'failed', failure.message);
}
