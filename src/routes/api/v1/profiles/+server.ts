import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { profilesJson } from '$lib/server/measurements/resolve';
import { api } from '$lib/server/problem';

/** The instrument profiles an acquisition PC may name in a measurement's `profile`. */
export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	return json({ profiles: await profilesJson(project.id) });
});
