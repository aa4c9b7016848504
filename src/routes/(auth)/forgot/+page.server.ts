import { z } from 'zod';
import { eq } from 'drizzle-orm';
import { db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { env } from '$lib/server/env';
import { email, parseForm } from '$lib/server/forms';
import { createLink } from '$lib/server/links';
import { sendMail } from '$lib/server/mail';
import type { Actions } from './$types';

const schema = z.object({ email });

export const actions: Actions = {
	default: async ({ request }) => {
		const form = await parseForm(request, schema);
		if (!form.ok) return form.failure;
		const user = await db.query.users.findFirst({ where: eq(users.email, form.data.email) });
		// The answer is the same whether or not the address has an account.
		if (user) {
			const { secret } = await createLink(db, { purpose: 'password-reset', email: user.email });
			await sendMail({
				to: user.email,
				subject: 'Reset your Phonotherm password',
				text: [
					'Someone asked to reset the password of this Phonotherm account.',
					'',
					`Choose a new password: ${env().ORIGIN}/reset/${secret}`,
					'',
					'The link works once and expires in one hour. If it was not you, ignore this message.'
				].join('\n')
			});
		}
		return { sent: form.data.email };
	}
};
