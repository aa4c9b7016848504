import { fail, isRedirect, redirect } from '@sveltejs/kit';
import { AuthError } from '@auth/sveltekit';
import { signIn } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths may follow sign-in, so the page cannot be used to bounce people away. */
function safeTarget(value: string | null): string {
	return value && value.startsWith('/') && !value.startsWith('//') ? value : '/projects';
}

// One message for every credentials failure, so the page does not reveal which addresses exist.
const WRONG = 'That e-mail and password do not match an account.';
const FAILED = 'Sign-in did not complete. Try again, or use the other way of signing in.';

export const load: PageServerLoad = ({ locals, url }) => {
	const redirectTo = safeTarget(
		url.searchParams.get('redirectTo') ?? url.searchParams.get('callbackUrl')
	);
	if (locals.user) redirect(303, redirectTo);
	const code = url.searchParams.get('error');
	return {
		redirectTo,
		error: code === null ? null : code === 'CredentialsSignin' ? WRONG : FAILED,
		signedOut: url.searchParams.has('signedOut'),
		reset: url.searchParams.has('reset'),
		joined: url.searchParams.get('joined')
	};
};

export const actions: Actions = {
	default: async (event) => {
		try {
			await signIn(event);
		} catch (err) {
			if (isRedirect(err)) throw err;
			// Auth.js throws on a failed credentials check when called from the server.
			if (err instanceof AuthError) {
				return fail(400, { error: err.type === 'CredentialsSignin' ? WRONG : FAILED });
			}
			throw err;
		}
	}
};
