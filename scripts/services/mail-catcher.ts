// A local SMTP catcher: accepts every message on 127.0.0.1, keeps each one as a JSON file under
// the data folder (so mail survives a restart), and lets the app's dev-only mailbox page and the
// tests read them through a tiny JSON API:
//
//   GET    /messages        newest first: [{ id, from, to, subject, date }]; ?to=<address> filters
//   GET    /messages/:id    one message, with text and html
//   DELETE /messages        forget every message (tests)
//   DELETE /messages/:id    forget one message
import { randomBytes } from 'node:crypto';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import { mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync, renameSync } from 'node:fs';
import type { Server } from 'node:net';
import { join } from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import { assertPortFree, describeListenError, LOOPBACK } from './util';

export interface MailCatcherOptions {
	dataDir: string;
	smtpPort: number;
	httpPort: number;
	fresh?: boolean;
}

export interface MailCatcherHandle {
	smtpUrl: string;
	apiUrl: string;
	smtpPort: number;
	httpPort: number;
	directory: string;
	stop(): Promise<void>;
}

export interface CaughtMessageSummary {
	id: string;
	from: string;
	to: string[];
	subject: string;
	/** ISO 8601: the Date header, or the time it arrived when the header is missing. */
	date: string;
}

export interface CaughtMessage extends CaughtMessageSummary {
	receivedAt: string;
	cc: string[];
	envelope: { from: string | null; to: string[] };
	text: string | null;
	html: string | null;
	attachments: { filename: string | null; contentType: string; size: number }[];
}

function addresses(value: AddressObject | AddressObject[] | undefined): string[] {
	const list = Array.isArray(value) ? value : value ? [value] : [];
	return list.flatMap((group) => group.value.map((entry) => entry.address ?? '').filter(Boolean));
}

function summary(message: CaughtMessage): CaughtMessageSummary {
	const { id, from, to, subject, date } = message;
	return { id, from, to, subject, date };
}

/** Ids sort by arrival: a zero-padded millisecond time, then randomness for equal times. */
function newId(): string {
	return `${Date.now().toString().padStart(15, '0')}-${randomBytes(4).toString('hex')}`;
}

const ID_PATTERN = /^[0-9]{15}-[0-9a-f]{8}$/;

export async function startMailCatcher(options: MailCatcherOptions): Promise<MailCatcherHandle> {
	const directory = join(options.dataDir, 'mail');
	if (options.fresh) rmSync(directory, { recursive: true, force: true });
	mkdirSync(directory, { recursive: true });

	const store = {
		save(message: CaughtMessage) {
			// Write then rename, so a reader never sees half a file.
			const file = join(directory, `${message.id}.json`);
			writeFileSync(`${file}.tmp`, JSON.stringify(message, null, '\t'));
			renameSync(`${file}.tmp`, file);
		},
		list(): CaughtMessage[] {
			return readdirSync(directory)
				.filter((name) => name.endsWith('.json'))
				.sort()
				.reverse()
				.map((name) => JSON.parse(readFileSync(join(directory, name), 'utf8')) as CaughtMessage);
		},
		get(id: string): CaughtMessage | undefined {
			if (!ID_PATTERN.test(id)) return undefined;
			try {
				return JSON.parse(readFileSync(join(directory, `${id}.json`), 'utf8')) as CaughtMessage;
			} catch {
				return undefined;
			}
		},
		remove(id?: string) {
			for (const name of readdirSync(directory)) {
				if (id === undefined || name === `${id}.json`)
					rmSync(join(directory, name), { force: true });
			}
		}
	};

	const smtp = new SMTPServer({
		authOptional: true,
		// Accept whatever credentials an SMTP_URL carries; this is a catcher, not a relay.
		onAuth: (auth, _session, callback) => callback(null, { user: auth.username ?? 'anyone' }),
		disabledCommands: ['STARTTLS'],
		logger: false,
		size: 25 * 1024 * 1024,
		onData(stream, session, callback) {
			simpleParser(stream)
				.then((parsed) => {
					const receivedAt = new Date();
					const envelopeTo = session.envelope.rcptTo.map((rcpt) => rcpt.address);
					const headerTo = addresses(parsed.to);
					const mailFrom = session.envelope.mailFrom;
					const message: CaughtMessage = {
						id: newId(),
						from: parsed.from?.text ?? (mailFrom ? mailFrom.address : ''),
						to: headerTo.length > 0 ? headerTo : envelopeTo,
						cc: addresses(parsed.cc),
						subject: parsed.subject ?? '',
						date: (parsed.date ?? receivedAt).toISOString(),
						receivedAt: receivedAt.toISOString(),
						envelope: { from: mailFrom ? mailFrom.address : null, to: envelopeTo },
						text: parsed.text ?? null,
						html: typeof parsed.html === 'string' ? parsed.html : null,
						attachments: parsed.attachments.map((attachment) => ({
							filename: attachment.filename ?? null,
							contentType: attachment.contentType,
							size: attachment.size
						}))
					};
					store.save(message);
					callback();
				})
				.catch((error: Error) => callback(error));
		}
	});

	const http = createServer((req, res) => handle(req, res));

	function send(res: ServerResponse, status: number, body: unknown) {
		res.writeHead(status, {
			'content-type': 'application/json; charset=utf-8',
			'cache-control': 'no-store'
		});
		res.end(JSON.stringify(body));
	}

	function handle(req: IncomingMessage, res: ServerResponse) {
		const url = new URL(req.url ?? '/', `http://${LOOPBACK}`);
		const parts = url.pathname.split('/').filter(Boolean);
		if (parts[0] !== 'messages' || parts.length > 2) {
			return send(res, 404, { error: 'not found; try GET /messages' });
		}
		const id = parts[1];
		if (req.method === 'GET' && id === undefined) {
			const to = url.searchParams.get('to')?.toLowerCase();
			const messages = store
				.list()
				.filter((m) => !to || m.to.some((address) => address.toLowerCase() === to));
			return send(res, 200, messages.map(summary));
		}
		if (req.method === 'GET') {
			const message = store.get(id);
			return message ? send(res, 200, message) : send(res, 404, { error: `no message ${id}` });
		}
		if (req.method === 'DELETE') {
			store.remove(id);
			res.writeHead(204).end();
			return;
		}
		res.setHeader('allow', 'GET, DELETE');
		send(res, 405, { error: `${req.method} is not allowed` });
	}

	await assertPortFree(options.smtpPort, 'the SMTP catcher');
	if (options.httpPort !== 0) await assertPortFree(options.httpPort, 'the mail catcher API');

	const listen = (start: (ready: () => void) => Server, port: number, what: string) =>
		new Promise<number>((resolve, reject) => {
			const server = start(() => {
				const address = server.address();
				resolve(typeof address === 'object' && address ? address.port : port);
			});
			server.once('error', (error) => reject(describeListenError(error, port, what)));
		});

	const smtpPort = await listen(
		(ready) => smtp.listen(options.smtpPort, LOOPBACK, ready),
		options.smtpPort,
		'the SMTP catcher'
	);
	let httpPort: number;
	try {
		httpPort = await listen(
			(ready) => http.listen(options.httpPort, LOOPBACK, ready),
			options.httpPort,
			'the mail catcher API'
		);
	} catch (error) {
		await new Promise<void>((resolve) => smtp.close(() => resolve()));
		throw error;
	}

	return {
		smtpUrl: `smtp://${LOOPBACK}:${smtpPort}`,
		apiUrl: `http://${LOOPBACK}:${httpPort}`,
		smtpPort,
		httpPort,
		directory,
		async stop() {
			await Promise.all([
				new Promise<void>((resolve) => smtp.close(() => resolve())),
				new Promise<void>((resolve) => {
					http.close(() => resolve());
					http.closeAllConnections();
				})
			]);
		}
	};
}
