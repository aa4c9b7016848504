import { GetObjectCommand } from '@aws-sdk/client-s3';
import { error } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { loadMeasurement } from '$lib/server/measurements/views';
import { bucket, s3 } from '$lib/server/storage';
import type { RequestHandler } from './$types';

/** RFC 6266 / 5987: an ASCII fallback plus the exact UTF-8 name. */
function disposition(name: string): string {
	const ascii = name.replace(/[^\x20-\x7e]|["\\]/g, '_');
	return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}`;
}

/** An original file of a measurement, streamed from storage unchanged, under its uploaded name. */
export const GET: RequestHandler = async (event) => {
	const { project } = await requireProject(event, 'read');
	const found = await loadMeasurement(project.id, event.params.id);
	const file = found?.files.find((f) => f.part === event.params.part);
	if (!file) error(404, 'Not found');
	let body: ReadableStream;
	try {
		const object = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: file.objectKey }));
		body = object.Body!.transformToWebStream();
	} catch {
		error(503, 'The file could not be read from storage just now; try again in a minute.');
	}
	return new Response(body, {
		headers: {
			'content-type': file.contentType || 'application/octet-stream',
			'content-length': String(file.bytes),
			'content-disposition': disposition(file.fileName),
			'cache-control': 'private, no-store'
		}
	});
};
