// The other half of "nothing is written half": the files reach storage, then the database
// refuses the rows (here: a project that does not exist breaks the foreign key). The client
// gets 503 and the stored objects are removed again.
import { ListObjectsV2Command } from '@aws-sdk/client-s3';
import { afterAll, describe, expect, it } from 'vitest';
import { closeDb } from '../src/lib/server/db';
import { ingestMeasurement } from '../src/lib/server/measurements/ingest';
import { bucket, s3 } from '../src/lib/server/storage';
import { si532Ingest } from './support/pairs';

afterAll(closeDb);

describe('database refuses after the upload', () => {
	it('answers 503 and leaves no object behind', async () => {
		const missingProject = 2_000_000_000;
		const err = await ingestMeasurement({
			projectId: missingProject,
			actor: {},
			...si532Ingest()
		}).catch((e) => e);
		expect(err.status).toBe(503);
		const listed = await s3().send(
			new ListObjectsV2Command({ Bucket: bucket(), Prefix: `projects/${missingProject}/` })
		);
		expect(listed.Contents ?? []).toEqual([]);
	});
});
