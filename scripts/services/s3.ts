// A fake S3 (s3rver) in this process, on 127.0.0.1, keeping its objects under the data folder.
import { mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import S3rver from 's3rver';
import { assertPortFree, describeListenError, LOOPBACK } from './util';

export interface S3Options {
	dataDir: string;
	port: number;
	bucket?: string;
	fresh?: boolean;
}

export interface S3Handle {
	endpoint: string;
	port: number;
	bucket: string;
	region: string;
	accessKeyId: string;
	secretAccessKey: string;
	directory: string;
	stop(): Promise<void>;
}

// s3rver accepts any signature made with these; they are its documented defaults.
const ACCESS_KEY = 'S3RVER';

// Lets the browser PUT straight to a presigned URL (upload progress) from the app's origin.
const CORS = `<CORSConfiguration>
  <CORSRule>
    <AllowedOrigin>*</AllowedOrigin>
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedMethod>PUT</AllowedMethod>
    <AllowedMethod>POST</AllowedMethod>
    <AllowedMethod>DELETE</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

export async function startS3(options: S3Options): Promise<S3Handle> {
	const bucket = options.bucket ?? 'phonotherm';
	const directory = join(options.dataDir, 's3');
	if (options.fresh) rmSync(directory, { recursive: true, force: true });
	mkdirSync(directory, { recursive: true });
	if (options.port !== 0) await assertPortFree(options.port, 'the S3 server (s3rver)');

	const server = new S3rver({
		address: LOOPBACK,
		port: options.port,
		silent: true,
		directory,
		// Creates the bucket when missing and leaves an existing one (and its objects) alone.
		configureBuckets: [{ name: bucket, configs: [CORS] }]
	});
	let port: number;
	try {
		({ port } = await server.run());
	} catch (error) {
		throw describeListenError(error, options.port, 'the S3 server (s3rver)');
	}
	return {
		endpoint: `http://${LOOPBACK}:${port}`,
		port,
		bucket,
		region: 'us-east-1',
		accessKeyId: ACCESS_KEY,
		secretAccessKey: ACCESS_KEY,
		directory,
		stop: () => server.close()
	};
}
