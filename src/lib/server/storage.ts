import { HeadBucketCommand, S3Client } from '@aws-sdk/client-s3';
import { env } from './env';

let client: S3Client | undefined;

export function s3(): S3Client {
	if (!client) {
		const e = env();
		client = new S3Client({
			endpoint: e.S3_ENDPOINT,
			region: e.S3_REGION,
			forcePathStyle: e.S3_FORCE_PATH_STYLE,
			credentials: { accessKeyId: e.S3_ACCESS_KEY_ID, secretAccessKey: e.S3_SECRET_ACCESS_KEY },
			// Without these the SDK sends aws-chunked bodies that simple S3 servers store verbatim.
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});
	}
	return client;
}

export const bucket = () => env().S3_BUCKET;

export async function pingStorage(): Promise<boolean> {
	try {
		await s3().send(new HeadBucketCommand({ Bucket: bucket() }));
		return true;
	} catch {
		return false;
	}
}
