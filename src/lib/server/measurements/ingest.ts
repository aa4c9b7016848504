import { DeleteObjectCommand, PutObjectCommand } from '@aws-sdk/client-s3';
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { analysisOptions } from '../../analysis-options';
import type { MeasurementMetadata, MeasurementRequest } from '../../measurement-metadata';
import { preparePair, type PairInputs } from '../../thermometry/analyze';
import { EngineError } from '../../thermometry/types';
import { recordAudit, type Actor } from '../audit';
import { db } from '../db';
import { ensureSeries } from '../series-store';
import { analyses, measurementFiles, measurements } from '../db/schema';
import { problem } from '../problem';
import { bucket, s3 } from '../storage';
import { enqueueAnalysis } from './jobs';
import { MAX_FILE_BYTES } from './limits';
import { resolveRequest } from './resolve';

export type Part = 'stokes' | 'anti_stokes' | 'combined' | 'dark';

export interface IncomingFile {
	part: Part;
	fileName: string;
	contentType: string;
	bytes: Uint8Array;
}

export type Measurement = typeof measurements.$inferSelect;

const sha256 = (bytes: Uint8Array | string) => createHash('sha256').update(bytes).digest('hex');
const text = (bytes: Uint8Array) => new TextDecoder('utf-8').decode(bytes);

/** Check the set of parts, the sizes and the contents before anything is stored. */
export function checkFiles(
	files: IncomingFile[],
	metadata: MeasurementMetadata,
	maxFileBytes = MAX_FILE_BYTES
): PairInputs {
	const parts = new Set(files.map((f) => f.part));
	if (files.length !== parts.size) throw problem(422, 'Each file part may appear only once.');
	const pair = parts.has('stokes') || parts.has('anti_stokes');
	if (parts.has('combined') ? pair : !(parts.has('stokes') && parts.has('anti_stokes'))) {
		throw problem(
			422,
			'Send either two file parts, `stokes` and `anti_stokes`, or one part `combined` that spans both sides of the laser line.'
		);
	}
	for (const f of files) {
		if (f.bytes.byteLength > maxFileBytes) {
			throw problem(
				413,
				`The ${f.part} file “${f.fileName}” is ${(f.bytes.byteLength / 2 ** 20).toFixed(1)} MiB; the limit is ${maxFileBytes / 2 ** 20} MiB per file. Crop the window to the band region or bin the spectrum, or upload it through POST /api/v1/uploads.`
			);
		}
		if (f.bytes.byteLength === 0)
			throw problem(422, `The ${f.part} file “${f.fileName}” is empty.`);
	}
	const file = (part: Part) => {
		const f = files.find((x) => x.part === part);
		return f ? { name: f.fileName, text: text(f.bytes) } : undefined;
	};
	const inputs: PairInputs = {
		stokes: file('stokes'),
		antiStokes: file('anti_stokes'),
		combined: file('combined'),
		dark: file('dark') ?? metadata.dark_counts
	};
	try {
		// Parsing, axis and band coverage now, so a bad file is refused at once with its reason;
		// the fit itself runs in the worker.
		preparePair(inputs, analysisOptions(metadata));
	} catch (err) {
		if (err instanceof EngineError) {
			throw problem(422, err.message, {
				code: err.code,
				file: err.details.file,
				row: err.details.row
			});
		}
		throw err;
	}
	return inputs;
}

// Of what the client sent, so a retry still matches after the profile's calibration changed.
function requestHash(metadata: MeasurementRequest, files: IncomingFile[]) {
	const parts = files
		.map((f) => `${f.part}:${sha256(f.bytes)}`)
		.sort()
		.join(',');
	return sha256(JSON.stringify(metadata) + '|' + parts);
}

const safeName = (name: string) => name.replace(/[^\w.-]+/g, '_').slice(0, 120) || 'spectrum';

export function objectKey(projectId: number, measurementId: string, part: Part, fileName: string) {
	return `projects/${projectId}/measurements/${measurementId}/${part}/${safeName(fileName)}`;
}

async function findByKey(projectId: number, key: string) {
	return db.query.measurements.findFirst({
		where: and(eq(measurements.projectId, projectId), eq(measurements.idempotencyKey, key))
	});
}

function replay(existing: Measurement, hash: string) {
	if (existing.requestHash !== hash) {
		throw problem(
			422,
			'This Idempotency-Key was already used for a different upload. Use a new key for a new measurement.'
		);
	}
	return { measurement: existing, created: false };
}

const unavailable = () =>
	problem(
		503,
		'File storage or the database is unavailable right now; nothing was stored. Retry the same request (with the same Idempotency-Key) in a minute.'
	);

/**
 * Store a measurement: files to object storage, then the rows in one transaction, then the
 * analysis job. If any step fails, what was written is removed, so nothing half-made stays.
 */
export async function ingestMeasurement(input: {
	projectId: number;
	actor: Actor;
	metadata: MeasurementRequest;
	files: IncomingFile[];
	idempotencyKey?: string;
	maxFileBytes?: number;
}): Promise<{ measurement: Measurement; created: boolean }> {
	const { projectId, actor, files, idempotencyKey } = input;
	const { metadata, profileVersionId, calibrationId } = await resolveRequest(
		projectId,
		input.metadata
	);
	checkFiles(files, metadata, input.maxFileBytes);
	const hash = requestHash(input.metadata, files);
	if (idempotencyKey) {
		const existing = await findByKey(projectId, idempotencyKey);
		if (existing) return replay(existing, hash);
	}

	const measurementId = crypto.randomUUID();
	const stored: string[] = [];
	const cleanUp = () =>
		Promise.allSettled(
			stored.map((Key) => s3().send(new DeleteObjectCommand({ Bucket: bucket(), Key })))
		);
	const keys = files.map((f) => objectKey(projectId, measurementId, f.part, f.fileName));
	try {
		await Promise.all(
			files.map(async (f, i) => {
				await s3().send(
					new PutObjectCommand({
						Bucket: bucket(),
						Key: keys[i],
						Body: f.bytes,
						ContentType: f.contentType
					})
				);
				stored.push(keys[i]);
			})
		);
	} catch (err) {
		console.error('storage:', (err as Error).message);
		await cleanUp();
		throw unavailable();
	}

	let result: { measurement: Measurement; analysisId: string };
	try {
		result = await db.transaction(async (tx) => {
			const [measurement] = await tx
				.insert(measurements)
				.values({
					id: measurementId,
					projectId,
					metadata,
					label: metadata.label,
					batch: metadata.batch,
					series: metadata.series,
					x: metadata.x,
					y: metadata.y,
					laserPowerMw: metadata.laser_power_mw,
					acquiredAt: metadata.acquired_at ? new Date(metadata.acquired_at) : null,
					uploadedBy: actor.userId ?? null,
					uploadedByToken: actor.tokenId ?? null,
					idempotencyKey: idempotencyKey ?? null,
					requestHash: hash
				})
				.returning();
			await ensureSeries(tx, projectId, metadata.series, actor);
			await tx.insert(measurementFiles).values(
				files.map((f, i) => ({
					measurementId,
					part: f.part,
					objectKey: keys[i],
					fileName: f.fileName,
					contentType: f.contentType,
					bytes: f.bytes.byteLength,
					sha256: sha256(f.bytes)
				}))
			);
			const [analysis] = await tx
				.insert(analyses)
				.values({
					measurementId,
					settings: metadata,
					profileVersionId,
					calibrationId,
					requestedBy: actor.userId ?? null,
					requestedByToken: actor.tokenId ?? null
				})
				.returning({ id: analyses.id });
			await recordAudit(tx, {
				projectId,
				actor,
				action: 'measurement.upload',
				objectType: 'measurement',
				objectId: measurementId,
				after: {
					files: files.map((f) => ({ part: f.part, name: f.fileName, sha256: sha256(f.bytes) }))
				}
			});
			return { measurement, analysisId: analysis.id };
		});
	} catch (err) {
		await cleanUp();
		// Two copies of one retried request raced: the other one won, so answer with its result.
		if (idempotencyKey && (err as { cause?: { code?: string } }).cause?.code === '23505') {
			const existing = await findByKey(projectId, idempotencyKey);
			if (existing) return replay(existing, hash);
		}
		console.error('database:', (err as Error).message);
		throw unavailable();
	}

	await enqueueAnalysis(result.analysisId);
	return { measurement: result.measurement, created: true };
}
