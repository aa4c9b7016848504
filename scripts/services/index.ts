// Starts the local stand-ins for PostgreSQL, S3, SMTP and single sign-on, and returns the
// environment the app reads. A service is left out when the environment already points at a
// real one (DATABASE_URL, S3_ENDPOINT, SMTP_URL, OIDC_ISSUER): then its variables pass through.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { startMailCatcher } from './mail-catcher';
import { DEFAULT_OIDC_CLIENT_ID, DEFAULT_OIDC_CLIENT_SECRET, startOidc } from './oidc';
import { SSO_INSTITUTE } from './sso-accounts';
import { startPostgres } from './postgres';
import { startS3 } from './s3';
import { defaultLog, LOOPBACK, type Log } from './util';

export { SSO_ACCOUNTS, SSO_INSTITUTE, type SsoAccount } from './sso-accounts';

export interface ServicePorts {
	postgres: number;
	s3: number;
	smtp: number;
	mailHttp: number;
	oidc: number;
	/** The app's own port; only used to form ORIGIN and PORT. */
	app: number;
}

/** The ports `npm start` uses. Tests pick free random ones instead. */
export const DEFAULT_PORTS: ServicePorts = {
	postgres: 55432,
	s3: 4569,
	smtp: 2525,
	mailHttp: 2580,
	oidc: 9400,
	app: 3000
};

export interface StartServicesOptions {
	/** Folder for every service's files (absolute or relative to the working directory). */
	dataDir: string;
	ports?: Partial<ServicePorts>;
	/** Wipe each local service's files first (tests). */
	fresh?: boolean;
	/**
	 * Variables that may point at real services or override defaults (process.env plus .env for
	 * `npm start`). Defaults to process.env; pass {} to run everything locally whatever is set.
	 */
	environment?: Record<string, string | undefined>;
	log?: Log;
}

/** What the app reads (it validates these with zod). */
export interface AppEnv {
	DATABASE_URL: string;
	S3_ENDPOINT: string;
	S3_REGION: string;
	S3_BUCKET: string;
	S3_ACCESS_KEY_ID: string;
	S3_SECRET_ACCESS_KEY: string;
	S3_FORCE_PATH_STYLE: string;
	SMTP_URL: string;
	MAIL_FROM: string;
	/** Only when the local catcher runs. */
	MAIL_CATCHER_URL?: string;
	OIDC_ISSUER: string;
	OIDC_CLIENT_ID: string;
	OIDC_CLIENT_SECRET: string;
	/** What the sign-in button calls the issuer. */
	OIDC_NAME?: string;
	AUTH_SECRET: string;
	AUTH_TRUST_HOST: string;
	ORIGIN: string;
	HOST: string;
	PORT: string;
	DEMO_CREDENTIALS_FILE: string;
}

export interface ServiceInfo {
	name: 'postgres' | 's3' | 'mail' | 'oidc';
	/** false when the environment pointed at a real service and nothing was started. */
	local: boolean;
	summary: string;
}

export interface Services {
	env: AppEnv;
	dataDir: string;
	services: ServiceInfo[];
	/** Where the PostgreSQL cluster's files are, when it runs locally. */
	postgresLocation?: string;
	stop(): Promise<void>;
}

export const DEFAULT_MAIL_FROM = 'Phonotherm <no-reply@phonotherm.localhost>';

/** Made once per data folder and kept, so sessions survive a restart. */
function authSecret(dataDir: string): string {
	const file = join(dataDir, 'auth-secret');
	if (existsSync(file)) return readFileSync(file, 'utf8').trim();
	const secret = randomBytes(32).toString('base64url');
	writeFileSync(file, `${secret}\n`, { mode: 0o600 });
	return secret;
}

export async function startServices(options: StartServicesOptions): Promise<Services> {
	const log = options.log ?? defaultLog;
	const given = options.environment ?? process.env;
	const ports = { ...DEFAULT_PORTS, ...options.ports };
	const dataDir = resolve(options.dataDir);
	mkdirSync(dataDir, { recursive: true });
	const fresh = options.fresh ?? false;
	const value = (name: string) => (given[name] && given[name] !== '' ? given[name] : undefined);

	const appPort = value('PORT') ?? String(ports.app);
	const origin = value('ORIGIN') ?? `http://${LOOPBACK}:${appPort}`;
	const stops: { name: string; stop: () => Promise<void> }[] = [];
	const services: ServiceInfo[] = [];
	let postgresLocation: string | undefined;

	const stop = async () => {
		// Last started, first stopped; one failing stop must not keep the others running.
		for (const service of stops.splice(0).reverse()) {
			try {
				await service.stop();
			} catch (error) {
				log(`stopping ${service.name} failed: ${String(error)}`);
			}
		}
	};

	try {
		let databaseUrl = value('DATABASE_URL');
		if (databaseUrl) {
			services.push({
				name: 'postgres',
				local: false,
				summary: 'PostgreSQL: DATABASE_URL from the environment'
			});
		} else {
			const pg = await startPostgres({ dataDir, port: ports.postgres, fresh, log });
			stops.push({ name: 'PostgreSQL', stop: pg.stop });
			databaseUrl = pg.url;
			postgresLocation = pg.location;
			services.push({
				name: 'postgres',
				local: true,
				summary: `PostgreSQL  ${pg.url}  (files in ${pg.location})`
			});
		}

		const s3 = {
			endpoint: value('S3_ENDPOINT'),
			accessKeyId: value('S3_ACCESS_KEY_ID'),
			secret: value('S3_SECRET_ACCESS_KEY')
		};
		const bucket = value('S3_BUCKET') ?? 'phonotherm';
		const region = value('S3_REGION') ?? 'us-east-1';
		let forcePathStyle = value('S3_FORCE_PATH_STYLE') ?? 'true';
		if (s3.endpoint) {
			services.push({
				name: 's3',
				local: false,
				summary: `S3: ${s3.endpoint} from the environment`
			});
		} else {
			const fake = await startS3({ dataDir, port: ports.s3, bucket, fresh });
			stops.push({ name: 's3rver', stop: fake.stop });
			s3.endpoint = fake.endpoint;
			s3.accessKeyId = fake.accessKeyId;
			s3.secret = fake.secretAccessKey;
			forcePathStyle = 'true';
			services.push({
				name: 's3',
				local: true,
				summary: `S3 (s3rver) ${fake.endpoint}  bucket ${bucket}  (files in ${fake.directory})`
			});
		}

		let smtpUrl = value('SMTP_URL');
		let mailCatcherUrl = value('MAIL_CATCHER_URL');
		if (smtpUrl) {
			services.push({ name: 'mail', local: false, summary: 'SMTP: SMTP_URL from the environment' });
		} else {
			const mail = await startMailCatcher({
				dataDir,
				smtpPort: ports.smtp,
				httpPort: ports.mailHttp,
				fresh
			});
			stops.push({ name: 'mail catcher', stop: mail.stop });
			smtpUrl = mail.smtpUrl;
			mailCatcherUrl = mail.apiUrl;
			services.push({
				name: 'mail',
				local: true,
				summary: `SMTP catcher ${mail.smtpUrl}  messages at ${mail.apiUrl}/messages`
			});
		}

		let oidcIssuer = value('OIDC_ISSUER');
		let oidcClientId = value('OIDC_CLIENT_ID');
		let oidcClientSecret = value('OIDC_CLIENT_SECRET');
		let oidcName = value('OIDC_NAME');
		if (oidcIssuer) {
			services.push({
				name: 'oidc',
				local: false,
				summary: `OIDC issuer: ${oidcIssuer} from the environment`
			});
		} else {
			const oidc = await startOidc({
				dataDir,
				port: ports.oidc,
				origin,
				clientId: oidcClientId ?? DEFAULT_OIDC_CLIENT_ID,
				clientSecret: oidcClientSecret ?? DEFAULT_OIDC_CLIENT_SECRET,
				fresh
			});
			stops.push({ name: 'OIDC issuer', stop: oidc.stop });
			oidcIssuer = oidc.issuer;
			oidcClientId = oidc.clientId;
			oidcClientSecret = oidc.clientSecret;
			oidcName ??= SSO_INSTITUTE;
			services.push({
				name: 'oidc',
				local: true,
				summary: `OIDC issuer ${oidc.issuer}  client ${oidc.clientId}`
			});
		}

		const env: AppEnv = {
			DATABASE_URL: databaseUrl,
			S3_ENDPOINT: s3.endpoint,
			S3_REGION: region,
			S3_BUCKET: bucket,
			S3_ACCESS_KEY_ID: s3.accessKeyId ?? '',
			S3_SECRET_ACCESS_KEY: s3.secret ?? '',
			S3_FORCE_PATH_STYLE: forcePathStyle,
			SMTP_URL: smtpUrl,
			MAIL_FROM: value('MAIL_FROM') ?? DEFAULT_MAIL_FROM,
			...(mailCatcherUrl ? { MAIL_CATCHER_URL: mailCatcherUrl } : {}),
			OIDC_ISSUER: oidcIssuer,
			OIDC_CLIENT_ID: oidcClientId ?? DEFAULT_OIDC_CLIENT_ID,
			OIDC_CLIENT_SECRET: oidcClientSecret ?? '',
			...(oidcName ? { OIDC_NAME: oidcName } : {}),
			AUTH_SECRET: value('AUTH_SECRET') ?? authSecret(dataDir),
			AUTH_TRUST_HOST: value('AUTH_TRUST_HOST') ?? 'true',
			ORIGIN: origin,
			HOST: value('HOST') ?? LOOPBACK,
			PORT: appPort,
			DEMO_CREDENTIALS_FILE:
				value('DEMO_CREDENTIALS_FILE') ?? join(dataDir, 'demo-credentials.json')
		};
		return { env, dataDir, services, postgresLocation, stop };
	} catch (error) {
		await stop();
		throw error;
	}
}
