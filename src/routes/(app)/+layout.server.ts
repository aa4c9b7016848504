import { requireUser } from '$lib/server/access';
import type { LayoutServerLoad } from './$types';

// Convenience only: every page and action below also calls its own guard.
export const load: LayoutServerLoad = (event) => {
	requireUser(event);
};
