// `npm start`: the whole product on this machine. Local services under .data/, migrations, demo
// data once, a build when the sources changed, and the app on http://127.0.0.1:3000.
// Ctrl-C stops everything this started; the next start finds every row and file again.
import { join } from 'node:path';
import {
	applyMigrations,
	buildIfStale,
	environmentWithDotEnv,
	readDemoCredentials,
	ROOT,
	runSeed,
	serveApp,
	type AppServer
} from './lib/app';
import {
	DEFAULT_PORTS,
	SSO_ACCOUNTS,
	SSO_INSTITUTE,
	startServices,
	type Services
} from './services';
import { assertPortFree, defaultLog as log, SetupError } from './services/util';

const started = Date.now();
const environment = environmentWithDotEnv();
const dataDir = join(ROOT, '.data');
const appPort = Number(environment.PORT ?? DEFAULT_PORTS.app);

let services: Services | undefined;
let app: AppServer | undefined;
let stopping: Promise<void> | undefined;
let starting = true;
let stopRequested = false;

function shutdown(code: number): Promise<void> {
	stopping ??= (async () => {
		await app?.stop();
		await services?.stop();
		process.exit(code);
	})();
	return stopping;
}

class Interrupted extends Error {}
const checkpoint = () => {
	if (stopRequested) throw new Interrupted();
};

for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
	process.on(signal, () => {
		if (stopRequested) return;
		stopRequested = true;
		console.log(`\nphonotherm: stopping (${signal}) ...`);
		// While starting, the main flow stops at its next step, so nothing half-started is left.
		if (!starting) void shutdown(0);
	});
}

try {
	if (!Number.isInteger(appPort) || appPort <= 0) {
		throw new SetupError(`PORT=${environment.PORT} is not a port number`);
	}
	await assertPortFree(appPort, 'the Phonotherm app');
	services = await startServices({ dataDir, environment, ports: localPorts(), log });
	checkpoint();
	await applyMigrations(services.env.DATABASE_URL);
	const env = { ...services.env } as Record<string, string>;
	checkpoint();
	await runSeed(env);
	checkpoint();
	await buildIfStale(env);
	checkpoint();
	app = await serveApp(env);
	checkpoint();
	app.child.once('exit', (code) => {
		if (stopRequested) return;
		log(`the app server exited (code ${code}); stopping the services`);
		void shutdown(code ?? 1);
	});
	starting = false;
	printBanner(services, app.url);
	log(`ready in ${((Date.now() - started) / 1000).toFixed(1)} s; press Ctrl-C to stop`);
} catch (error) {
	if (stopRequested) {
		await shutdown(130);
	} else {
		const reason = error instanceof SetupError ? error.message : ((error as Error)?.stack ?? error);
		console.error(`\nphonotherm: could not start: ${reason}`);
		await shutdown(1);
	}
}

/** The local services' ports: the defaults, or LOCAL_*_PORT when one of them is taken. */
function localPorts() {
	const names = {
		postgres: 'LOCAL_POSTGRES_PORT',
		s3: 'LOCAL_S3_PORT',
		smtp: 'LOCAL_SMTP_PORT',
		mailHttp: 'LOCAL_MAIL_API_PORT',
		oidc: 'LOCAL_OIDC_PORT'
	} as const;
	const ports: Partial<Record<keyof typeof names, number>> = {};
	for (const [key, name] of Object.entries(names) as [keyof typeof names, string][]) {
		const raw = environment[name];
		if (!raw) continue;
		const port = Number(raw);
		if (!Number.isInteger(port) || port <= 0 || port > 65535) {
			throw new SetupError(`${name}=${raw} is not a port number`);
		}
		ports[key] = port;
	}
	return { ...ports, app: appPort };
}

function printBanner(running: Services, url: string) {
	const { env } = running;
	const lines = ['', `Phonotherm is running at ${url}`, ''];
	lines.push(`Data lives in ${running.dataDir}`);
	if (running.postgresLocation && !running.postgresLocation.startsWith(running.dataDir)) {
		lines.push(`  (the PostgreSQL cluster is in ${running.postgresLocation})`);
	}
	lines.push('', 'Services:');
	for (const service of running.services) lines.push(`  ${service.summary}`);

	const demo = readDemoCredentials(env.DEMO_CREDENTIALS_FILE);
	if (demo) {
		lines.push('', `Demo accounts${demo.project ? ` (project ${demo.project})` : ''}:`);
		for (const account of demo.accounts ?? []) {
			lines.push(
				`  ${account.role.padEnd(9)} ${account.email.padEnd(36)} ${account.password.padEnd(20)} ${account.name}`
			);
		}
	} else {
		lines.push('', `No demo accounts yet (${env.DEMO_CREDENTIALS_FILE} was not written).`);
	}
	if (running.services.find((s) => s.name === 'oidc')?.local) {
		lines.push('', `Single sign-on accounts (${SSO_INSTITUTE}, "Sign in with SSO"):`);
		for (const account of SSO_ACCOUNTS) {
			lines.push(
				`  ${account.email.padEnd(36)} ${account.password.padEnd(20)} ${account.name}, ${account.title}`
			);
		}
	}
	if (env.MAIL_CATCHER_URL) {
		lines.push(
			'',
			`Mail the app sends is caught and kept: ${url}/dev/mailbox (or ${env.MAIL_CATCHER_URL}/messages)`
		);
	}
	lines.push('');
	if (demo?.token) lines.push(`Demo acquisition token: ${demo.token}`, '');
	console.log(lines.join('\n'));
}
