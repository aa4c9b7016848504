// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Locals {
			user: {
				id: string;
				email: string;
				name: string | null;
				notifyOnProblems: boolean;
				hasPassword: boolean;
			} | null;
		}
	}
}

export {};
