// `npm run worker`: one more analysis worker against the same database and bucket as the app
// (set DATABASE_URL, S3_* and SMTP_URL as for the app; .env is read too). Start as many as the
// load needs, here or on other machines; Ctrl-C lets the current job finish, then stops.
import { existsSync, readFileSync } from 'node:fs';
import { parseEnv } from 'node:util';
import { closeDb } from '../src/lib/server/db';
import { env } from '../src/lib/server/env';
import { stopQueue } from '../src/lib/server/queue';
import { startWorker } from '../src/lib/server/worker';

if (existsSync('.env')) {
	for (const [k, v] of Object.entries(parseEnv(readFileSync('.env', 'utf8')))) process.env[k] ??= v;
}
// Without a public URL of its own a worker only needs ORIGIN for links in e-mail.
process.env.ORIGIN ??= 'http://127.0.0.1:3000';
process.env.AUTH_SECRET ??= 'worker-does-not-sign-in-anyone';
env();

const worker = await startWorker({ concurrency: Number(process.env.WORKER_CONCURRENCY ?? 2) });
console.log(`worker: ready (pid ${process.pid})`);

let stopping = false;
async function stop() {
	if (stopping) return;
	stopping = true;
	await worker.stop();
	await stopQueue();
	await closeDb();
	process.exit(0);
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
