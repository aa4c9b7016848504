// The steps `npm start` and `npm test` share once the services run: migrate, seed, build, serve.
import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream, existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { parseEnv } from 'node:util';
import { drizzle } from 'drizzle-orm/postgres-js';
import { migrate } from 'drizzle-orm/postgres-js/migrator';
import postgres from 'postgres';
import { defaultLog, run, runChecked, waitForHttp, type Log } from '../services/util';

export const ROOT = join(import.meta.dirname, '..', '..');
const bin = (name: string) => join(ROOT, 'node_modules', '.bin', name);

/** The environment with .env underneath it: a variable set in the shell wins over the file. */
export function environmentWithDotEnv(): Record<string, string | undefined> {
	const file = join(ROOT, '.env');
	const fromFile = existsSync(file) ? parseEnv(readFileSync(file, 'utf8')) : {};
	return { ...fromFile, ...process.env };
}

const seconds = (since: number) => `${((Date.now() - since) / 1000).toFixed(1)} s`;

/** Applies the committed migrations in ./drizzle (the journal drizzle-kit writes lists them). */
export async function applyMigrations(databaseUrl: string, log: Log = defaultLog): Promise<void> {
	const folder = join(ROOT, 'drizzle');
	if (!existsSync(join(folder, 'meta', '_journal.json'))) {
		log('no migrations in ./drizzle yet; skipping the database migration step');
		return;
	}
	const started = Date.now();
	const sql = postgres(databaseUrl, { max: 1, onnotice: () => {} });
	try {
		await migrate(drizzle(sql), { migrationsFolder: folder });
	} finally {
		await sql.end();
	}
	log(`database migrations applied (${seconds(started)})`);
}

/** Runs scripts/seed.ts (idempotent: it seeds the demo scenario once) with the app's env. */
export async function runSeed(
	env: Record<string, string>,
	log: Log = defaultLog
): Promise<boolean> {
	const script = join(ROOT, 'scripts', 'seed.ts');
	if (!existsSync(script)) {
		log('scripts/seed.ts does not exist yet; skipping the demo data');
		return false;
	}
	const started = Date.now();
	// The seed imports app modules through $lib, whose path mapping lives in .svelte-kit/, which a
	// fresh clone does not have until SvelteKit writes it.
	await runChecked(bin('svelte-kit'), ['sync'], { cwd: ROOT });
	const code = await new Promise<number>((resolve, reject) => {
		const child = spawn(bin('tsx'), [script], {
			cwd: ROOT,
			env: { ...process.env, ...env },
			stdio: ['ignore', 'inherit', 'inherit']
		});
		child.once('error', reject);
		child.once('exit', (exitCode) => resolve(exitCode ?? 1));
	});
	if (code !== 0) throw new Error(`scripts/seed.ts exited with ${code}`);
	log(`demo data ready (${seconds(started)})`);
	return true;
}

function newestMtime(path: string): number {
	if (!existsSync(path)) return 0;
	const stat = statSync(path);
	if (!stat.isDirectory()) return stat.mtimeMs;
	let newest = stat.mtimeMs;
	for (const entry of readdirSync(path)) newest = Math.max(newest, newestMtime(join(path, entry)));
	return newest;
}

const BUILD_INPUTS = [
	'src',
	'static',
	'package-lock.json',
	'svelte.config.js',
	'vite.config.ts',
	'tailwind.config.ts',
	'tsconfig.json'
];

/** Builds with `vite build` when build/ is missing or older than any of its inputs. */
export async function buildIfStale(
	env: Record<string, string>,
	{ log = defaultLog, force = false }: { log?: Log; force?: boolean } = {}
): Promise<void> {
	const marker = join(ROOT, 'build', 'handler.js');
	const built = existsSync(marker) ? statSync(marker).mtimeMs : 0;
	const sources = Math.max(...BUILD_INPUTS.map((input) => newestMtime(join(ROOT, input))));
	if (!force && built > sources) {
		log('the app build is up to date');
		return;
	}
	log('building the app (vite build) ...');
	const started = Date.now();
	// The build sees the runtime env so that server modules reading it at import time load; the
	// app must still read it at run time ($env/dynamic/private), not bake it in.
	const result = await run(bin('vite'), ['build'], { cwd: ROOT, env: { ...process.env, ...env } });
	if (result.code !== 0) {
		process.stdout.write(result.stdout);
		process.stderr.write(result.stderr);
		throw new Error(`vite build failed (exit ${result.code}); its output is above`);
	}
	log(`app built (${seconds(started)})`);
}

export interface AppServer {
	child: ChildProcess;
	url: string;
	stop(): Promise<void>;
}

/**
 * Serves build/ with `node build` and waits until it answers; stop() gives it graceMs to exit.
 * Output goes to the terminal, or to logFile when given (tests keep their output readable).
 */
export async function serveApp(
	env: Record<string, string>,
	{
		logFile,
		timeoutMs = 60_000,
		graceMs = 10_000
	}: { logFile?: string; timeoutMs?: number; graceMs?: number } = {}
): Promise<AppServer> {
	const out = logFile ? createWriteStream(logFile, { flags: 'a' }) : undefined;
	const child = spawn(process.execPath, ['build'], {
		cwd: ROOT,
		// adapter-node's own body limit (512 KiB) would refuse uploads before the API can answer
		// with its own limits in problem+json; the routes enforce those.
		env: { BODY_SIZE_LIMIT: '100M', ...process.env, ...env },
		stdio: ['ignore', out ? 'pipe' : 'inherit', out ? 'pipe' : 'inherit']
	});
	if (out) {
		child.stdout?.pipe(out);
		child.stderr?.pipe(out);
	}
	const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
	let alive = true;
	child.once('exit', () => (alive = false));

	const stop = async () => {
		if (alive) {
			child.kill('SIGTERM');
			const timer = setTimeout(() => {
				if (!alive) return;
				// adapter-node waits for open handles (database pools, queue workers) to close.
				console.log(
					`phonotherm: the app server did not stop within ${graceMs / 1000} s of SIGTERM; killing it`
				);
				child.kill('SIGKILL');
			}, graceMs);
			await exited;
			clearTimeout(timer);
		}
		out?.end();
	};

	const url = `http://${env.HOST}:${env.PORT}`;
	try {
		// /healthz when the app has it; any HTTP answer from / means the server is up either way.
		const health = await waitForHttp(`${url}/healthz`, { timeoutMs, isAlive: () => alive });
		if (health.status === 404) await waitForHttp(`${url}/`, { timeoutMs, isAlive: () => alive });
	} catch (error) {
		await stop();
		throw error;
	}
	return { child, url, stop };
}

export interface DemoCredentials {
	accounts: { email: string; password: string; role: string; name: string }[];
	token?: string;
	project?: string;
}

export function readDemoCredentials(file: string): DemoCredentials | undefined {
	if (!existsSync(file)) return undefined;
	try {
		return JSON.parse(readFileSync(file, 'utf8')) as DemoCredentials;
	} catch {
		return undefined;
	}
}
