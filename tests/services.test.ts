// The local services `npm test` starts answer as the app expects them to.
import { GetObjectCommand, PutObjectCommand, S3Client } from '@aws-sdk/client-s3';
import nodemailer from 'nodemailer';
import postgres from 'postgres';
import { describe, expect, it } from 'vitest';

function required(name: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`${name} is not set; run the tests with \`npm test\``);
	return value;
}

describe('local services', () => {
	it('PostgreSQL answers on 127.0.0.1', async () => {
		const url = new URL(required('DATABASE_URL'));
		expect(url.hostname).toBe('127.0.0.1');
		const sql = postgres(url.href, { max: 1 });
		try {
			const [row] = await sql`select 1 as one`;
			expect(row.one).toBe(1);
		} finally {
			await sql.end();
		}
	});

	it('the S3 bucket stores and returns an object', async () => {
		const s3 = new S3Client({
			endpoint: required('S3_ENDPOINT'),
			region: required('S3_REGION'),
			forcePathStyle: process.env.S3_FORCE_PATH_STYLE === 'true',
			credentials: {
				accessKeyId: required('S3_ACCESS_KEY_ID'),
				secretAccessKey: required('S3_SECRET_ACCESS_KEY')
			},
			// s3rver stores aws-chunked framing as content unless checksums are off by default.
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});
		const Bucket = required('S3_BUCKET');
		const Key = `service-check/${Date.now()}.csv`;
		const Body = 'raman_shift_cm-1,counts\n520.7,10234\n-520.7,2113\n';
		await s3.send(new PutObjectCommand({ Bucket, Key, Body, ContentType: 'text/csv' }));
		const got = await s3.send(new GetObjectCommand({ Bucket, Key }));
		expect(await got.Body?.transformToString()).toBe(Body);
		expect(got.ContentType).toBe('text/csv');
		s3.destroy();
	});

	it('mail sent over SMTP arrives at the catcher', async () => {
		const catcher = required('MAIL_CATCHER_URL');
		const transport = nodemailer.createTransport(required('SMTP_URL'));
		const subject = `Service check ${Date.now()}`;
		await transport.sendMail({
			from: required('MAIL_FROM'),
			to: 'mira.okafor@halvorsen.example',
			subject,
			text: 'Batch B-17 left its control limits.',
			html: '<p>Batch <b>B-17</b> left its control limits.</p>'
		});
		transport.close();

		const list = (await (await fetch(`${catcher}/messages`)).json()) as {
			id: string;
			subject: string;
			to: string[];
		}[];
		const summary = list.find((message) => message.subject === subject);
		expect(summary?.to).toEqual(['mira.okafor@halvorsen.example']);

		const message = (await (await fetch(`${catcher}/messages/${summary?.id}`)).json()) as {
			text: string;
			html: string;
		};
		expect(message.text).toContain('B-17');
		expect(message.html).toContain('<b>B-17</b>');

		const filtered = await (await fetch(`${catcher}/messages?to=nobody@halvorsen.example`)).json();
		expect(filtered).toEqual([]);
	});

	it('the OIDC issuer publishes its discovery document', async () => {
		const issuer = required('OIDC_ISSUER');
		const response = await fetch(`${issuer}/.well-known/openid-configuration`);
		expect(response.status).toBe(200);
		const discovery = (await response.json()) as Record<string, unknown>;
		expect(discovery.issuer).toBe(issuer);
		expect(discovery.authorization_endpoint).toBe(`${issuer}/auth`);
		expect(discovery.code_challenge_methods_supported).toContain('S256');
	});

	it('the app server answers at APP_URL', async () => {
		const response = await fetch(required('APP_URL'), { redirect: 'manual' });
		expect(response.status).toBeLessThan(500);
	});
});
