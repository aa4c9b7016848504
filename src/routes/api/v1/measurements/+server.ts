import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { ingestMeasurement } from '$lib/server/measurements/ingest';
import { discardUploads, readMeasurementRequest } from '$lib/server/measurements/requests';
import { listFilters, listMeasurements, measurementJson } from '$lib/server/measurements/views';
import { api, problem } from '$lib/server/problem';

export const POST = api(async (event) => {
	const { token, project } = await requireToken(event, 'measurements:write');
	const key = event.request.headers.get('idempotency-key') ?? undefined;
	if (key !== undefined && !/^[\x21-\x7e]{1,200}$/.test(key)) {
		throw problem(400, 'The Idempotency-Key header must be 1–200 printable ASCII characters.');
	}
	const { metadata, files, uploadKeys, maxFileBytes } = await readMeasurementRequest(
		event.request,
		project.id
	);
	const { measurement, created } = await ingestMeasurement({
		projectId: project.id,
		actor: { tokenId: token.id },
		metadata,
		files,
		idempotencyKey: key,
		maxFileBytes
	});
	if (created) await discardUploads(uploadKeys);
	const body = measurementJson(measurement, {
		files: [],
		reading: null,
		failure: null,
		origin: event.url.origin
	});
	return json(
		{ id: body.id, status: body.status, created, links: body.links },
		{ status: 202, headers: { location: body.links.self } }
	);
});

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const filters = listFilters.parse(Object.fromEntries(event.url.searchParams));
	const page = await listMeasurements(project.id, filters);
	if ('error' in page) throw problem(400, page.error!);
	const next = page.nextCursor ? new URL(event.url) : null;
	next?.searchParams.set('cursor', page.nextCursor!);
	return json({
		items: page.items.map((i) =>
			measurementJson(i.measurement, {
				files: [],
				reading: i.reading,
				failure: i.failure,
				origin: event.url.origin
			})
		),
		next_cursor: page.nextCursor,
		links: { next: next?.toString() ?? null }
	});
});
