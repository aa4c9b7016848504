import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { env } from '$lib/server/env';
import type { PageServerLoad } from './$types';

// Only present when the local SMTP catcher is configured: a developer reads outgoing mail here.
const summary = z.object({
	id: z.string(),
	from: z
		.string()
		.nullish()
		.transform((v) => v ?? ''),
	to: z
		.union([z.string(), z.array(z.string())])
		.nullish()
		.transform((v) => (Array.isArray(v) ? v.join(', ') : (v ?? ''))),
	subject: z
		.string()
		.nullish()
		.transform((v) => v ?? ''),
	date: z.string().optional().default('')
});
const full = summary.extend({
	text: z
		.string()
		.nullish()
		.transform((v) => v ?? '')
});

export const load: PageServerLoad = async ({ url, fetch }) => {
	const base = env().MAIL_CATCHER_URL;
	if (!base) error(404, 'Not found');
	try {
		const list = z.array(summary).parse(await (await fetch(`${base}/messages`)).json());
		const id = url.searchParams.get('id') ?? list[0]?.id;
		const open = id
			? full.parse(await (await fetch(`${base}/messages/${encodeURIComponent(id)}`)).json())
			: null;
		return { messages: list, open };
	} catch {
		error(503, 'The local mail catcher does not answer; is `npm start` still running?');
	}
};
