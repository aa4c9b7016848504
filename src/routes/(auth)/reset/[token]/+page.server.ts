import { error, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { recordAudit } from '$lib/server/audit';
import { db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { fieldFailure, parseForm, withNewPassword } from '$lib/server/forms';
import { consumeLink, peekLink } from '$lib/server/links';
import { hashPassword } from '$lib/server/passwords';
import type { Actions, PageServerLoad } from './$types';

const schema = withNewPassword({});

export const load: PageServerLoad = async ({ params }) => {
	const state = await peekLink(params.token, 'password-reset');
	if (!state.ok) error(410, state.reason);
	return { email: state.link.email };
};

export const actions: Actions = {
	default: async ({ request, params }) => {
		const form = await parseForm(request, schema);
		if (!form.ok) return form.failure;
		const passwordHash = await hashPassword(form.data.password);
		const outcome = await db.transaction(async (tx) => {
			const state = await consumeLink(tx, params.token, 'password-reset');
			if (!state.ok) return state;
			const [user] = await tx
				.update(users)
				.set({ passwordHash })
				.where(eq(users.email, state.link.email))
				.returning({ id: users.id });
			if (user) {
				await recordAudit(tx, {
					projectId: null,
					actor: { userId: user.id },
					action: 'account.password-reset',
					objectType: 'user',
					objectId: user.id
				});
			}
			return state;
		});
		if (!outcome.ok) return fieldFailure(410, 'password', outcome.reason);
		redirect(303, '/signin?reset=1');
	}
};
