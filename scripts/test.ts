// `npm test`: everything throwaway. A fresh .test-data/ folder, free random ports, its own
// PostgreSQL cluster, s3rver, mail catcher and OIDC issuer, the built app on its own port, then
// vitest with that env plus APP_URL (= BASE_URL) and CHROMIUM_PATH. Extra arguments go to vitest:
// `npm test -- src/lib/thermometry`. It ignores .env and any DATABASE_URL etc. in the shell:
// tests must never touch a real service.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { applyMigrations, buildIfStale, ROOT, runSeed, serveApp, type AppServer } from './lib/app';
import { startServices, type Services } from './services';
import { defaultLog as log, freePort, isRoot, runChecked, SetupError } from './services/util';

const CHROMIUM = '/usr/bin/chromium';
const started = Date.now();
const dataDir = join(ROOT, '.test-data');
const vitestArgs = process.argv.slice(2);
const elapsed = () => `${((Date.now() - started) / 1000).toFixed(1)} s`;

let services: Services | undefined;
let app: AppServer | undefined;
let vitest: ChildProcess | undefined;
let interrupted = false;

for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
	process.on(signal, () => {
		if (interrupted) return;
		interrupted = true;
		console.log(`\nphonotherm: ${signal}: stopping the tests and every service they started ...`);
		vitest?.kill(signal);
	});
}

async function ensureChromium(): Promise<void> {
	if (existsSync(CHROMIUM)) return;
	if (!isRoot()) {
		log(
			`${CHROMIUM} is missing and this is not root: browser tests will fail. Install it with ` +
				'`sudo apt-get install -y chromium`.'
		);
		return;
	}
	log('installing Debian chromium for the browser tests (apt-get install chromium) ...');
	const begun = Date.now();
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	await runChecked('apt-get', ['update'], { env });
	await runChecked('apt-get', ['install', '-y', 'chromium'], { env });
	log(`chromium installed (${((Date.now() - begun) / 1000).toFixed(1)} s)`);
}

async function runVitest(env: Record<string, string>): Promise<number> {
	return await new Promise<number>((resolve, reject) => {
		vitest = spawn(join(ROOT, 'node_modules', '.bin', 'vitest'), ['run', ...vitestArgs], {
			cwd: ROOT,
			env: { ...process.env, ...env },
			stdio: ['ignore', 'inherit', 'inherit']
		});
		vitest.once('error', reject);
		vitest.once('exit', (code, signal) => resolve(code ?? (signal ? 130 : 1)));
	});
}

function printAppLogTail(file: string) {
	if (!existsSync(file)) return;
	const tail = readFileSync(file, 'utf8').trimEnd().split('\n').slice(-40);
	if (tail.length === 0 || tail[0] === '') return;
	console.log(`\n--- last lines of the app server log (${file}) ---\n${tail.join('\n')}\n---`);
}

let exitCode = 1;
const appLog = join(dataDir, 'app.log');
try {
	rmSync(dataDir, { recursive: true, force: true });
	mkdirSync(dataDir, { recursive: true });
	await ensureChromium();

	const ports = {
		postgres: await freePort(),
		s3: await freePort(),
		smtp: await freePort(),
		mailHttp: await freePort(),
		oidc: await freePort(),
		app: await freePort()
	};
	services = await startServices({ dataDir, ports, fresh: true, environment: {}, log });
	log(`services up (${elapsed()}): ${services.services.map((s) => s.summary).join('; ')}`);
	const env: Record<string, string> = { ...services.env };
	await applyMigrations(env.DATABASE_URL);
	await runSeed(env);
	await buildIfStale(env);
	if (interrupted) throw new Error('interrupted');
	// Its data is thrown away, so a short grace period is enough.
	app = await serveApp(env, { logFile: appLog, graceMs: 2_000 });
	log(`app serving at ${app.url} (log in ${appLog}); running vitest (${elapsed()})`);

	// Vitest overwrites BASE_URL in process.env with Vite's base ('/'), so tests read APP_URL.
	exitCode = await runVitest({
		...env,
		APP_URL: app.url,
		BASE_URL: app.url,
		CHROMIUM_PATH: CHROMIUM
	});
	if (exitCode !== 0) printAppLogTail(appLog);
} catch (error) {
	console.error(
		`\nphonotherm: tests could not run: ${error instanceof SetupError ? error.message : ((error as Error)?.stack ?? error)}`
	);
	printAppLogTail(appLog);
	exitCode = interrupted ? 130 : 1;
} finally {
	await app?.stop();
	await services?.stop();
	log(`finished in ${elapsed()} with exit code ${exitCode}`);
}
process.exit(exitCode);
