import nodemailer, { type Transporter } from 'nodemailer';
import { env } from './env';

let transport: Transporter | undefined;

function transporter(): Transporter {
	if (!transport) {
		const url = new URL(env().SMTP_URL);
		transport = nodemailer.createTransport({
			host: url.hostname,
			port: Number(url.port || (url.protocol === 'smtps:' ? 465 : 25)),
			secure: url.protocol === 'smtps:',
			// The local catcher speaks plain SMTP; real relays negotiate TLS when offered.
			ignoreTLS: url.hostname === '127.0.0.1' || url.hostname === 'localhost',
			auth: url.username
				? { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) }
				: undefined
		});
	}
	return transport;
}

export interface Message {
	to: string;
	subject: string;
	text: string;
	html?: string;
}

export async function sendMail(message: Message): Promise<void> {
	await transporter().sendMail({ from: env().MAIL_FROM, ...message });
}

export async function pingMail(): Promise<boolean> {
	try {
		return await transporter().verify();
	} catch {
		return false;
	}
}
