// Seeds the demo scenario once; `npm start` runs it on every start. The demo credentials are
// written to DEMO_CREDENTIALS_FILE (in the local data folder) so that each start can print them:
// the database keeps only a hash of the token.
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { closeDb } from '../src/lib/server/db';
import { stopQueue } from '../src/lib/server/queue';
import {
	DEMO_ACCOUNTS,
	DEMO_PROJECT_SLUG,
	reissueDemoToken,
	seedDemo
} from '../src/lib/server/seed/demo';

const file = process.env.DEMO_CREDENTIALS_FILE;

try {
	const seeded = await seedDemo();
	if (seeded) {
		if (file) writeFileSync(file, JSON.stringify(seeded, null, 2), { mode: 0o600 });
		console.log('Seeded the demo scenario.');
	} else if (file && !existsSync(file)) {
		const token = await reissueDemoToken();
		writeFileSync(
			file,
			JSON.stringify({ project: DEMO_PROJECT_SLUG, accounts: DEMO_ACCOUNTS, token }, null, 2),
			{ mode: 0o600 }
		);
		console.log('Demo scenario already present; issued a new demo acquisition token.');
	} else if (file) {
		JSON.parse(readFileSync(file, 'utf8'));
	}
} finally {
	await stopQueue();
	await closeDb();
}
