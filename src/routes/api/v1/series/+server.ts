import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { api, problem } from '$lib/server/problem';
import { seriesJson } from '$lib/server/series-json';
import { createSeries, listSeries, SeriesError, seriesBody } from '$lib/server/series-store';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const all = await listSeries(project.id);
	return json({
		items: all.map((s) => seriesJson(s, s.measurements, event.url.origin, project.slug))
	});
});

export const POST = api(async (event) => {
	const { token, project } = await requireToken(event, 'measurements:write');
	if (!(event.request.headers.get('content-type') ?? '').startsWith('application/json')) {
		throw problem(415, 'Send the series as JSON: { "name": …, "kind": … }.');
	}
	let raw: unknown;
	try {
		raw = await event.request.json();
	} catch {
		throw problem(400, 'The body is not valid JSON.');
	}
	const body = seriesBody.parse(raw);
	if (body.lower_spec_k != null || body.upper_spec_k != null) {
		throw problem(
			403,
			'Specification limits are set by a project owner on the series page, not by an acquisition token.'
		);
	}
	let made;
	try {
		made = await createSeries(project.id, body, { tokenId: token.id });
	} catch (err) {
		if (err instanceof SeriesError) throw problem(err.status, err.message);
		throw err;
	}
	const out = seriesJson(made, 0, event.url.origin, project.slug);
	return json(out, { status: 201, headers: { location: out.links.self } });
});
