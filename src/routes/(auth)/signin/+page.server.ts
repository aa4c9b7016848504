import { redirect } from '@sveltejs/kit';
import { signIn } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths may follow sign-in, so the page cannot be used to bounce people away. */
function safeTarget(value: string | null): string {
	return value && value.startsWith('/') && !value.startsWith('//') ? value : '/projects';
}

export const load: PageServerLoad = ({ locals, url }) => {
	const redirectTo = safeTarget(url.searchParams.get('redirectTo') ?? url.searchParams.get('callbackUrl'));
	if (locals.user) redirect(303, redirectTo);
	const code = url.searchParams.get('error');
	// One message for every credentials failure, so the page does not reveal which addresses exist.
	const error =
		code === null
			? null
			: code === 'CredentialsSignin'
				? 'That e-mail and password do not match an account.'
				: 'Sign-in did not complete. Try again, or use the other way of signing in.';
	return {
		redirectTo,
		error,
		signedOut: url.searchParams.has('signedOut'),
		reset: url.searchParams.has('reset'),
		joined: url.searchParams.get('joined')
	};
};

export const actions: Actions = { default: signIn };
