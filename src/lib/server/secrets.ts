import { createHash, randomBytes } from 'node:crypto';

/** A random URL-safe secret with a readable prefix, and the SHA-256 we store instead of it. */
export function newSecret(prefix: string): { secret: string; hash: string } {
	const secret = `${prefix}_${randomBytes(32).toString('base64url')}`;
	return { secret, hash: hashSecret(secret) };
}

// High-entropy secrets need no slow hash: SHA-256 cannot be brute-forced from 256 random bits.
export function hashSecret(secret: string): string {
	return createHash('sha256').update(secret).digest('hex');
}
