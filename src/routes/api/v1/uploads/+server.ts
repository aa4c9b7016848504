import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { presignUploads, uploadRequest } from '$lib/server/measurements/requests';
import { api } from '$lib/server/problem';

/** Presigned PUT URLs for files too large to send through the API itself. */
export const POST = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:write');
	const body = uploadRequest.parse(await event.request.json().catch(() => ({})));
	return json({ uploads: await presignUploads(project.id, body) }, { status: 201 });
});
