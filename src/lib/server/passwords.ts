import { hash, verify } from '@node-rs/argon2';

// argon2id with the library's defaults (m = 19 MiB, t = 2, p = 1), which meet OWASP's minimum.
export const MIN_PASSWORD_LENGTH = 10;

export function hashPassword(password: string): Promise<string> {
	return hash(password);
}

// Verifying against a fixed hash when the account does not exist keeps the time the same,
// so response time does not reveal which e-mail addresses have accounts.
let decoy: Promise<string> | undefined;

export async function verifyPassword(stored: string | null, password: string): Promise<boolean> {
	if (!stored) {
		decoy ??= hash('decoy-password-for-timing');
		await verify(await decoy, password).catch(() => false);
		return false;
	}
	return verify(stored, password).catch(() => false);
}
