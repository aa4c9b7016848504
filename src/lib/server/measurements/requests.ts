import { DeleteObjectCommand, GetObjectCommand, PutObjectCommand } from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { z } from 'zod';
import { measurementMetadata, type MeasurementRequest } from '../../measurement-metadata';
import { problem } from '../problem';
import { bucket, s3 } from '../storage';
import type { IncomingFile, Part } from './ingest';
import { MAX_FILE_BYTES, MAX_REQUEST_BYTES } from './limits';

/** Turning an HTTP request into a metadata object and files, for the API and the upload page. */

export const PARTS: Part[] = ['stokes', 'anti_stokes', 'combined', 'dark'];

export function parseMetadata(raw: unknown): MeasurementRequest {
	let value = raw;
	if (typeof raw === 'string') {
		try {
			value = JSON.parse(raw);
		} catch {
			throw problem(422, 'The `metadata` part is not valid JSON.');
		}
	}
	return measurementMetadata.parse(value);
}

export function checkLength(request: Request) {
	const length = Number(request.headers.get('content-length') ?? 0);
	if (length > MAX_REQUEST_BYTES) {
		throw problem(
			413,
			`The request is ${(length / 2 ** 20).toFixed(1)} MiB; uploads are limited to ${MAX_FILE_BYTES / 2 ** 20} MiB per file. Crop the windows to the band regions, or use POST /api/v1/uploads for large files.`
		);
	}
}

export async function filesFromForm(form: FormData): Promise<IncomingFile[]> {
	const files: IncomingFile[] = [];
	for (const part of PARTS) {
		const value = form.get(part);
		if (value === null) continue;
		if (typeof value === 'string') {
			throw problem(422, `The part \`${part}\` must be a file, not a text field.`);
		}
		if (value.size === 0 && value.name === '') continue; // an empty file input on a form
		files.push({
			part,
			fileName: value.name || `${part}.csv`,
			contentType: value.type || 'text/plain',
			bytes: new Uint8Array(await value.arrayBuffer())
		});
	}
	return files;
}

export async function readMeasurementRequest(request: Request, projectId: number) {
	checkLength(request);
	const type = request.headers.get('content-type') ?? '';
	if (!type.startsWith('multipart/form-data') && !type.startsWith('application/json')) {
		throw problem(
			415,
			'Send the measurement as multipart/form-data (file parts `stokes` and `anti_stokes`, or `combined`, and a JSON part `metadata`), or as JSON naming presigned uploads.'
		);
	}
	if (type.startsWith('application/json')) return readFromUploads(request, projectId);
	let form: FormData;
	try {
		form = await request.formData();
	} catch {
		throw problem(
			400,
			'The multipart body could not be read; check the boundary and the part headers.'
		);
	}
	const rawMeta = form.get('metadata');
	if (rawMeta === null) throw problem(422, 'The JSON part `metadata` is missing.');
	const metadata = parseMetadata(typeof rawMeta === 'string' ? rawMeta : await rawMeta.text());
	return {
		metadata,
		files: await filesFromForm(form),
		uploadKeys: [] as string[],
		maxFileBytes: MAX_FILE_BYTES
	};
}

// --- Presigned uploads for large files -------------------------------------------------

const UPLOAD_LIMIT = MAX_FILE_BYTES * 4;

export const uploadRequest = z.object({
	files: z
		.array(
			z.object({
				part: z.enum(['stokes', 'anti_stokes', 'combined', 'dark']),
				file_name: z.string().min(1).max(200),
				bytes: z
					.number()
					.int()
					.positive()
					.max(
						MAX_FILE_BYTES * 4,
						`Files uploaded this way may be up to ${(MAX_FILE_BYTES * 4) / 2 ** 20} MiB.`
					)
			})
		)
		.min(1)
		.max(4)
});

export const fromUploads = z.object({
	metadata: z.unknown(),
	uploads: z.partialRecord(
		z.enum(['stokes', 'anti_stokes', 'combined', 'dark']),
		z.string().min(1).max(400)
	)
});

export async function presignUploads(projectId: number, body: z.infer<typeof uploadRequest>) {
	const id = crypto.randomUUID();
	return Promise.all(
		body.files.map(async (f) => {
			const key = `uploads/${projectId}/${id}/${f.part}/${f.file_name.replace(/[^\w.-]+/g, '_')}`;
			const url = await getSignedUrl(s3(), new PutObjectCommand({ Bucket: bucket(), Key: key }), {
				expiresIn: 3600
			});
			return { part: f.part, upload_key: key, url, method: 'PUT', expires_in_s: 3600 };
		})
	);
}

async function readFromUploads(request: Request, projectId: number) {
	const body = fromUploads.parse(await request.json().catch(() => ({})));
	const metadata = parseMetadata(body.metadata);
	const files: IncomingFile[] = [];
	const uploadKeys: string[] = [];
	for (const [part, key] of Object.entries(body.uploads) as [Part, string][]) {
		if (!key.startsWith(`uploads/${projectId}/`)) {
			throw problem(
				422,
				`The upload key for \`${part}\` is not one that POST /api/v1/uploads gave out.`
			);
		}
		let object;
		try {
			object = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key }));
		} catch (err) {
			if ((err as { name?: string }).name === 'NoSuchKey') {
				throw problem(
					422,
					`Nothing was uploaded to the key for \`${part}\`; PUT the file to its URL first.`
				);
			}
			throw problem(
				503,
				'File storage is unavailable right now; nothing was stored. Retry in a minute.'
			);
		}
		const bytes = await object.Body!.transformToByteArray();
		if (bytes.byteLength > UPLOAD_LIMIT) {
			throw problem(
				413,
				`The uploaded \`${part}\` file is larger than ${UPLOAD_LIMIT / 2 ** 20} MiB.`
			);
		}
		files.push({
			part,
			fileName: key.split('/').pop()!,
			contentType: object.ContentType ?? 'text/plain',
			bytes
		});
		uploadKeys.push(key);
	}
	return { metadata, files, uploadKeys, maxFileBytes: UPLOAD_LIMIT };
}

export async function discardUploads(keys: string[]) {
	await Promise.allSettled(
		keys.map((Key) => s3().send(new DeleteObjectCommand({ Bucket: bucket(), Key })))
	);
}
