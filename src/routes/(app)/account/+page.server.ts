import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { requireUser } from '$lib/server/access';
import { recordAudit } from '$lib/server/audit';
import { db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { fieldFailure, parseForm, withNewPassword } from '$lib/server/forms';
import { hashPassword, verifyPassword } from '$lib/server/passwords';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	const user = requireUser(event);
	return { account: user };
};

const passwordSchema = withNewPassword({
	current: z.string().min(1, 'Enter your current password.')
});

export const actions: Actions = {
	password: async (event) => {
		const user = requireUser(event);
		const form = await parseForm(event.request, passwordSchema);
		if (!form.ok) return form.failure;
		const row = await db.query.users.findFirst({ where: eq(users.id, user.id) });
		if (!(await verifyPassword(row?.passwordHash ?? null, form.data.current))) {
			return fieldFailure(400, 'current', 'That is not your current password.');
		}
		await db.transaction(async (tx) => {
			await tx
				.update(users)
				.set({ passwordHash: await hashPassword(form.data.password) })
				.where(eq(users.id, user.id));
			await recordAudit(tx, {
				projectId: null,
				actor: { userId: user.id },
				action: 'account.password-change',
				objectType: 'user',
				objectId: user.id
			});
		});
		return { passwordChanged: true };
	},
	notifications: async (event) => {
		const user = requireUser(event);
		const form = await parseForm(event.request, z.object({ notify: z.literal('on').optional() }));
		if (!form.ok) return form.failure;
		await db
			.update(users)
			.set({ notifyOnProblems: Boolean(form.data.notify) })
			.where(eq(users.id, user.id));
		return { notificationsSaved: true };
	}
};
