import { error, fail, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from '$lib/server/audit';
import { db } from '$lib/server/db';
import { memberships, projects, users } from '$lib/server/db/schema';
import { parseForm, withNewPassword } from '$lib/server/forms';
import { consumeLink, peekLink } from '$lib/server/links';
import { hashPassword } from '$lib/server/passwords';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const state = await peekLink(params.token, 'invite');
	if (!state.ok) error(410, state.reason);
	const project = await db.query.projects.findFirst({
		where: eq(projects.id, state.link.projectId!)
	});
	if (!project) error(410, 'The project of this invitation no longer exists.');
	const account = await db.query.users.findFirst({ where: eq(users.email, state.link.email) });
	return {
		email: state.link.email,
		role: state.link.role,
		project: project.name,
		hasAccount: Boolean(account)
	};
};

const newAccount = withNewPassword({ name: z.string().trim().min(1, 'Enter your name.').max(120) });

/** Use the link and add the membership; creates the account when `create` is given. */
async function accept(
	token: string,
	create?: { name: string | null; passwordHash: string | null }
) {
	return db.transaction(async (tx) => {
		const state = await consumeLink(tx, token, 'invite');
		if (!state.ok) return { ok: false as const, reason: state.reason };
		const { link } = state;
		let user = await tx.query.users.findFirst({ where: eq(users.email, link.email) });
		if (!user) {
			if (!create)
				return { ok: false as const, reason: 'Choose a password to create your account.' };
			[user] = await tx
				.insert(users)
				.values({ email: link.email, name: create.name, passwordHash: create.passwordHash })
				.returning();
		}
		await tx
			.insert(memberships)
			.values({ projectId: link.projectId!, userId: user.id, role: link.role! })
			.onConflictDoNothing();
		await recordAudit(tx, {
			projectId: link.projectId,
			actor: { userId: user.id },
			action: 'member.join',
			objectType: 'membership',
			objectId: user.id,
			after: { role: link.role, invitation: link.id }
		});
		const project = await tx.query.projects.findFirst({ where: eq(projects.id, link.projectId!) });
		return { ok: true as const, project: project?.name ?? '' };
	});
}

export const actions: Actions = {
	join: async ({ params }) => {
		const result = await accept(params.token);
		if (!result.ok) return fail(410, { reason: result.reason });
		redirect(303, `/signin?joined=${encodeURIComponent(result.project)}`);
	},
	/** Join without a password; the person then signs in through single sign-on. */
	sso: async ({ params }) => {
		const result = await accept(params.token, { name: null, passwordHash: null });
		if (!result.ok) return fail(410, { reason: result.reason });
		redirect(303, `/signin?joined=${encodeURIComponent(result.project)}`);
	},
	create: async ({ request, params }) => {
		const form = await parseForm(request, newAccount);
		if (!form.ok) return form.failure;
		const result = await accept(params.token, {
			name: form.data.name,
			passwordHash: await hashPassword(form.data.password)
		});
		if (!result.ok) return fail(410, { reason: result.reason });
		redirect(303, `/signin?joined=${encodeURIComponent(result.project)}`);
	}
};
