// Nothing is written half: with object storage unreachable, or the database refusing the rows,
// the upload is answered 503 and no row or object stays behind (issue 4 item 3).
import { ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { si532Ingest } from './support/pairs';

const realEndpoint = process.env.S3_ENDPOINT!;
const real = new S3Client({
	endpoint: realEndpoint,
	region: process.env.S3_REGION,
	forcePathStyle: true,
	credentials: {
		accessKeyId: process.env.S3_ACCESS_KEY_ID!,
		secretAccessKey: process.env.S3_SECRET_ACCESS_KEY!
	}
});

async function objectsUnder(prefix: string) {
	const listed = await real.send(
		new ListObjectsV2Command({ Bucket: process.env.S3_BUCKET, Prefix: prefix })
	);
	return listed.Contents?.length ?? 0;
}

describe('storage unreachable', () => {
	let mod: typeof import('../src/lib/server/measurements/ingest');
	let dbMod: typeof import('../src/lib/server/db');
	let world: import('./support/world').World;

	beforeAll(async () => {
		// This test file's server modules see a storage endpoint where nothing listens.
		process.env.S3_ENDPOINT = 'http://127.0.0.1:9';
		mod = await import('../src/lib/server/measurements/ingest');
		dbMod = await import('../src/lib/server/db');
		world = await (await import('./support/world')).makeWorld('s3-down');
	});
	afterAll(async () => {
		process.env.S3_ENDPOINT = realEndpoint;
		await dbMod.closeDb();
	});

	it('answers 503 and stores no row', async () => {
		const { measurements } = await import('../src/lib/server/db/schema');
		const err = await mod
			.ingestMeasurement({ projectId: world.project.id, actor: {}, ...si532Ingest() })
			.catch((e) => e);
		expect(err.status).toBe(503);
		expect(err.detail).toMatch(/nothing was stored/);
		const rows = await dbMod.db
			.select()
			.from(measurements)
			.where(eq(measurements.projectId, world.project.id));
		expect(rows).toHaveLength(0);
		expect(await objectsUnder(`projects/${world.project.id}/`)).toBe(0);
	});
});
