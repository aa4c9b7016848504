// Small helpers shared by the local services and the start/test scripts.
import { spawn, type SpawnOptions } from 'node:child_process';
import { createServer } from 'node:net';

export const LOOPBACK = '127.0.0.1';

export type Log = (message: string) => void;

export const defaultLog: Log = (message) => console.log(`phonotherm: ${message}`);

/** Thrown for problems the person at the terminal can fix; start/test print only the message. */
export class SetupError extends Error {
	override name = 'SetupError';
}

/** Resolves when nothing listens on 127.0.0.1:port; rejects with a readable message otherwise. */
export async function assertPortFree(port: number, what: string): Promise<void> {
	await new Promise<void>((resolve, reject) => {
		const server = createServer();
		server.once('error', (error: NodeJS.ErrnoException) => {
			reject(
				error.code === 'EADDRINUSE'
					? new SetupError(
							`port ${port} on ${LOOPBACK} is already taken, so ${what} cannot start there. ` +
								`Stop whatever uses it (\`ss -ltnp 'sport = :${port}'\` shows it) or choose another port ` +
								'(PORT and the LOCAL_*_PORT variables in .env.example).'
						)
					: error
			);
		});
		server.listen({ host: LOOPBACK, port, exclusive: true }, () => server.close(() => resolve()));
	});
}

/** A port the kernel considers free right now (tests use these; a tiny race is acceptable). */
export async function freePort(): Promise<number> {
	return await new Promise<number>((resolve, reject) => {
		const server = createServer();
		server.once('error', reject);
		server.listen({ host: LOOPBACK, port: 0, exclusive: true }, () => {
			const address = server.address();
			const port = typeof address === 'object' && address ? address.port : 0;
			server.close(() => resolve(port));
		});
	});
}

/** Wraps listen errors of in-process servers into the same readable port message. */
export function describeListenError(error: unknown, port: number, what: string): Error {
	if ((error as NodeJS.ErrnoException)?.code === 'EADDRINUSE') {
		return new SetupError(
			`port ${port} on ${LOOPBACK} is already taken, so ${what} cannot start there. ` +
				`Stop whatever uses it or choose another port (the LOCAL_*_PORT variables in .env.example).`
		);
	}
	return error instanceof Error ? error : new Error(String(error));
}

export interface RunResult {
	code: number;
	stdout: string;
	stderr: string;
}

/** Runs a command to completion, capturing its output; stdin is closed (CI has none). */
export async function run(
	command: string,
	args: string[],
	options: SpawnOptions & { echo?: boolean } = {}
): Promise<RunResult> {
	return await new Promise<RunResult>((resolve, reject) => {
		const child = spawn(command, args, { ...options, stdio: ['ignore', 'pipe', 'pipe'] });
		let stdout = '';
		let stderr = '';
		child.stdout?.on('data', (chunk: Buffer) => {
			stdout += chunk;
			if (options.echo) process.stdout.write(chunk);
		});
		child.stderr?.on('data', (chunk: Buffer) => {
			stderr += chunk;
			if (options.echo) process.stderr.write(chunk);
		});
		child.once('error', reject);
		child.once('close', (code, signal) =>
			resolve({ code: code ?? (signal ? 128 : 1), stdout, stderr })
		);
	});
}

/** Like run(), but a non-zero exit becomes an error that carries the command's output. */
export async function runChecked(
	command: string,
	args: string[],
	options: SpawnOptions & { echo?: boolean } = {}
): Promise<RunResult> {
	const result = await run(command, args, options);
	if (result.code !== 0) {
		const output = `${result.stdout}\n${result.stderr}`.trim();
		throw new Error(`\`${[command, ...args].join(' ')}\` exited with ${result.code}\n${output}`);
	}
	return result;
}

/** Polls url until any HTTP response arrives (status does not matter) or the deadline passes. */
export async function waitForHttp(
	url: string,
	{ timeoutMs = 60_000, isAlive = () => true }: { timeoutMs?: number; isAlive?: () => boolean } = {}
): Promise<Response> {
	const deadline = Date.now() + timeoutMs;
	let lastError: unknown;
	while (Date.now() < deadline) {
		if (!isAlive()) throw new Error(`the process serving ${url} exited before it answered`);
		try {
			return await fetch(url, { redirect: 'manual', signal: AbortSignal.timeout(5_000) });
		} catch (error) {
			lastError = error;
			await new Promise((resolve) => setTimeout(resolve, 250));
		}
	}
	throw new Error(`no answer from ${url} within ${timeoutMs / 1000} s (${String(lastError)})`);
}

export const isRoot = (): boolean => typeof process.getuid === 'function' && process.getuid() === 0;
