// Debian's PostgreSQL, run by us in a data folder of the project, on 127.0.0.1 only.
//
// PostgreSQL refuses to run as root, so as root every server command runs as the `postgres`
// system user through runuser. That user must be able to enter every parent folder of the data
// folder; when it cannot (a checkout under a 700 home folder, say) the cluster lives under
// /var/lib/phonotherm/<hash of the data folder path>/ instead, and we say so.
import { createHash } from 'node:crypto';
import {
	chownSync,
	existsSync,
	mkdirSync,
	readFileSync,
	readdirSync,
	realpathSync,
	rmSync,
	writeFileSync
} from 'node:fs';
import { join } from 'node:path';
import postgres from 'postgres';
import { assertPortFree, defaultLog, isRoot, LOOPBACK, run, runChecked, SetupError } from './util';
import type { Log } from './util';

export interface PostgresOptions {
	/** The project's data folder (.data or .test-data); the cluster goes in <dataDir>/postgres. */
	dataDir: string;
	port: number;
	database?: string;
	/** Delete any existing cluster first (tests). */
	fresh?: boolean;
	log?: Log;
}

export interface PostgresHandle {
	url: string;
	port: number;
	database: string;
	/** Where the cluster's files are (may be outside the checkout, see above). */
	location: string;
	stop(): Promise<void>;
}

const PG_ROOT = '/usr/lib/postgresql';
const FALLBACK_ROOT = '/var/lib/phonotherm';

/** The bin folders of the installed PostgreSQL majors, newest first. */
function installedBinDirs(): { major: number; bin: string }[] {
	if (!existsSync(PG_ROOT)) return [];
	return readdirSync(PG_ROOT)
		.filter((name) => /^\d+$/.test(name))
		.map((name) => ({ major: Number(name), bin: join(PG_ROOT, name, 'bin') }))
		.filter(({ bin }) => existsSync(join(bin, 'initdb')) && existsSync(join(bin, 'pg_ctl')))
		.sort((a, b) => b.major - a.major);
}

async function ensureBinaries(log: Log): Promise<{ major: number; bin: string }[]> {
	let found = installedBinDirs();
	if (found.length > 0) return found;
	if (!isRoot()) {
		throw new SetupError(
			`PostgreSQL server binaries were not found under ${PG_ROOT}. Install them with ` +
				'`sudo apt-get install -y postgresql` (or run this command as root, which installs ' +
				'them itself), or point DATABASE_URL at a PostgreSQL server of your own.'
		);
	}
	log(
		'PostgreSQL is not installed; installing the Debian package (apt-get install postgresql) ...'
	);
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	await runChecked('apt-get', ['update'], { env });
	await runChecked('apt-get', ['install', '-y', '--no-install-recommends', 'postgresql'], { env });
	found = installedBinDirs();
	if (found.length === 0)
		throw new SetupError(`apt-get installed postgresql, but ${PG_ROOT} has no server.`);
	return found;
}

interface Runner {
	/** Runs a PostgreSQL program as the user the server runs as. */
	exec(program: string, args: string[]): Promise<{ code: number; stdout: string; stderr: string }>;
	/** Makes a folder that user owns (mode 700 unless told otherwise). */
	ownedDir(path: string, mode?: number): void;
	/** Can that user reach (search) this folder? */
	canEnter(path: string): Promise<boolean>;
}

async function makeRunner(): Promise<Runner> {
	if (!isRoot()) {
		return {
			exec: (program, args) => run(program, args),
			ownedDir: (path, mode = 0o700) => mkdirSync(path, { recursive: true, mode }),
			canEnter: async () => true
		};
	}
	const ids = await run('id', ['-u', 'postgres']);
	const gids = await run('id', ['-g', 'postgres']);
	if (ids.code !== 0 || gids.code !== 0) {
		throw new SetupError(
			'running as root, but there is no `postgres` system user to run PostgreSQL as ' +
				'(PostgreSQL refuses root). Reinstall the Debian package `postgresql`, which creates it.'
		);
	}
	const uid = Number(ids.stdout.trim());
	const gid = Number(gids.stdout.trim());
	return {
		exec: (program, args) => run('runuser', ['-u', 'postgres', '--', program, ...args]),
		ownedDir(path, mode = 0o700) {
			mkdirSync(path, { recursive: true, mode });
			chownSync(path, uid, gid);
		},
		async canEnter(path) {
			return (await run('runuser', ['-u', 'postgres', '--', 'test', '-x', path])).code === 0;
		}
	};
}

/** Where the cluster lives: <dataDir>/postgres, or a folder the postgres user can reach. */
async function chooseLocation(dataDir: string, runner: Runner, log: Log): Promise<string> {
	mkdirSync(dataDir, { recursive: true });
	const inside = join(dataDir, 'postgres');
	const pointer = join(dataDir, 'postgres-location.txt');
	if (await runner.canEnter(dataDir)) return inside;
	const hash = createHash('sha256').update(realpathSync(dataDir)).digest('hex').slice(0, 16);
	mkdirSync(FALLBACK_ROOT, { recursive: true, mode: 0o755 });
	const outside = join(FALLBACK_ROOT, hash);
	writeFileSync(
		pointer,
		`The PostgreSQL cluster of ${realpathSync(dataDir)} lives in ${outside}\n` +
			'because the postgres user cannot enter a parent folder of this checkout.\n'
	);
	log(
		`the postgres user cannot enter ${dataDir} (a parent folder is closed to it), ` +
			`so the database cluster lives in ${outside}`
	);
	return outside;
}

function processCommandLine(pid: number): string | undefined {
	try {
		return readFileSync(`/proc/${pid}/cmdline`, 'utf8').replaceAll('\0', ' ');
	} catch {
		return undefined;
	}
}

/**
 * After a crash, postmaster.pid may remain. PostgreSQL itself ignores it when the PID is dead, but
 * in containers the PID is often reused by some other process, and then it refuses to start. If
 * the PID is a postmaster of this very cluster, it is one we left running: stop it properly.
 */
async function clearStalePid(
	bin: string,
	pgdata: string,
	sockDir: string,
	runner: Runner,
	log: Log
): Promise<void> {
	const pidFile = join(pgdata, 'postmaster.pid');
	if (!existsSync(pidFile)) return;
	const pid = Number(readFileSync(pidFile, 'utf8').split('\n')[0]);
	const cmdline = Number.isInteger(pid) && pid > 0 ? processCommandLine(pid) : undefined;
	if (cmdline && /postgres/.test(cmdline) && cmdline.includes(pgdata)) {
		log(
			`a PostgreSQL server (pid ${pid}) from an earlier run still uses this cluster; stopping it`
		);
		const stopped = await runner.exec(join(bin, 'pg_ctl'), [
			'-D',
			pgdata,
			'-m',
			'fast',
			'-w',
			'stop'
		]);
		if (stopped.code === 0) return;
		throw new SetupError(
			`could not stop the earlier PostgreSQL server (pid ${pid}):\n${stopped.stderr}`
		);
	}
	log('removing a stale postmaster.pid left by a PostgreSQL server that did not stop cleanly');
	rmSync(pidFile, { force: true });
	for (const name of existsSync(sockDir) ? readdirSync(sockDir) : []) {
		if (name.startsWith('.s.PGSQL.')) rmSync(join(sockDir, name), { force: true });
	}
}

export async function startPostgres(options: PostgresOptions): Promise<PostgresHandle> {
	const log = options.log ?? defaultLog;
	const database = options.database ?? 'phonotherm';
	const { port } = options;
	const majors = await ensureBinaries(log);
	const runner = await makeRunner();
	const location = await chooseLocation(options.dataDir, runner, log);
	if (options.fresh) rmSync(location, { recursive: true, force: true });

	const pgdata = join(location, 'pgdata');
	const sockDir = join(location, 'pgsock');
	const logFile = join(location, 'server.log');
	runner.ownedDir(location, 0o755);
	runner.ownedDir(sockDir);

	// An existing cluster must be run by its own major version.
	const versionFile = join(pgdata, 'PG_VERSION');
	let chosen = majors[0];
	if (existsSync(versionFile)) {
		const major = Number(readFileSync(versionFile, 'utf8').trim());
		const match = majors.find((m) => m.major === major);
		if (!match) {
			throw new SetupError(
				`the cluster in ${pgdata} was made by PostgreSQL ${major}, but only ` +
					`${majors.map((m) => m.major).join(', ')} is installed. Install postgresql-${major}, ` +
					'or move that folder away to start with an empty database.'
			);
		}
		chosen = match;
	} else {
		log(`creating a PostgreSQL ${chosen.major} cluster in ${pgdata}`);
		runner.ownedDir(pgdata);
		const base = ['-D', pgdata, '-U', 'postgres', '--auth=trust', '--encoding=UTF8'];
		let made = await runner.exec(join(chosen.bin, 'initdb'), [...base, '--locale=C.UTF-8']);
		if (made.code !== 0) {
			// Some minimal systems lack the C.UTF-8 locale; the C locale always exists.
			rmSync(pgdata, { recursive: true, force: true });
			runner.ownedDir(pgdata);
			made = await runner.exec(join(chosen.bin, 'initdb'), [...base, '--no-locale']);
		}
		if (made.code !== 0) throw new Error(`initdb failed:\n${made.stdout}\n${made.stderr}`);
	}

	await clearStalePid(chosen.bin, pgdata, sockDir, runner, log);
	await assertPortFree(port, 'PostgreSQL');

	const serverOptions = `-p ${port} -k "${sockDir}" -c listen_addresses=${LOOPBACK}`;
	const started = await runner.exec(join(chosen.bin, 'pg_ctl'), [
		...['-D', pgdata, '-l', logFile, '-o', serverOptions, '-w', '-t', '60', 'start']
	]);
	if (started.code !== 0) {
		const tail = existsSync(logFile) ? readFileSync(logFile, 'utf8').split('\n').slice(-15) : [];
		throw new Error(
			`PostgreSQL did not start:\n${started.stdout}\n${started.stderr}\n${tail.join('\n')}`
		);
	}

	const stop = async () => {
		const stopped = await runner.exec(join(chosen.bin, 'pg_ctl'), [
			...['-D', pgdata, '-m', 'fast', '-w', '-t', '60', 'stop']
		]);
		if (stopped.code !== 0 && existsSync(join(pgdata, 'postmaster.pid'))) {
			log(`PostgreSQL did not stop cleanly: ${stopped.stderr.trim()}`);
		}
	};

	try {
		const admin = postgres({
			host: LOOPBACK,
			port,
			user: 'postgres',
			database: 'postgres',
			max: 1,
			onnotice: () => {}
		});
		try {
			const rows = await admin`select 1 from pg_database where datname = ${database}`;
			if (rows.length === 0)
				await admin.unsafe(`create database "${database.replaceAll('"', '""')}"`);
		} finally {
			await admin.end();
		}
	} catch (error) {
		await stop();
		throw error;
	}

	return {
		url: `postgres://postgres@${LOOPBACK}:${port}/${encodeURIComponent(database)}`,
		port,
		database,
		location: pgdata,
		stop
	};
}
