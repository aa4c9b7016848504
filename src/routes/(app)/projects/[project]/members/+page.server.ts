import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { ROLES } from '$lib/roles';
import { requireProject } from '$lib/server/access';
import { email, parseForm } from '$lib/server/forms';
import {
	changeRole,
	inviteMember,
	MemberError,
	membersOf,
	removeMember
} from '$lib/server/projects';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project, user } = await requireProject(event, 'read');
	return { members: await membersOf(project.id), me: user.id };
};

const role = z.enum(ROLES, 'Choose one of the four roles.');
const inviteSchema = z.object({ email, role });
const roleSchema = z.object({ userId: z.string().min(1), role });
const removeSchema = z.object({ userId: z.string().min(1) });

async function guarded<T>(work: () => Promise<T>) {
	try {
		await work();
		return null;
	} catch (err) {
		if (err instanceof MemberError) return fail(409, { problem: err.message });
		throw err;
	}
}

export const actions: Actions = {
	invite: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(event.request, inviteSchema);
		if (!form.ok) return form.failure;
		return (
			(await guarded(() => inviteMember(project, form.data.email, form.data.role, user))) ?? {
				invited: form.data.email
			}
		);
	},
	role: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(event.request, roleSchema);
		if (!form.ok) return form.failure;
		return (
			(await guarded(() => changeRole(project.id, form.data.userId, form.data.role, user.id))) ?? {
				changed: true
			}
		);
	},
	remove: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(event.request, removeSchema);
		if (!form.ok) return form.failure;
		return (
			(await guarded(() => removeMember(project.id, form.data.userId, user.id))) ?? {
				removed: true
			}
		);
	}
};
