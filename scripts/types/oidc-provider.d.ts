// oidc-provider ships no type declarations; this covers the part of its API our issuer uses.
declare module 'oidc-provider' {
	import type { IncomingMessage, ServerResponse } from 'node:http';

	export interface Prompt {
		name: string;
		reasons: string[];
		details: {
			missingOIDCScope?: string[];
			missingOIDCClaims?: string[];
			missingResourceScopes?: Record<string, string[]>;
			[key: string]: unknown;
		};
	}

	export interface Interaction {
		uid: string;
		prompt: Prompt;
		params: Record<string, unknown> & { client_id: string; login_hint?: string; scope?: string };
		session?: { accountId?: string };
		grantId?: string;
	}

	export interface GrantInstance {
		addOIDCScope(scope: string): void;
		addOIDCClaims(claims: string[]): void;
		addResourceScope(indicator: string, scope: string): void;
		save(): Promise<string>;
	}

	export interface GrantClass {
		new (properties: { accountId?: string; clientId: string }): GrantInstance;
		find(id: string): Promise<GrantInstance | undefined>;
	}

	export interface ClientInstance {
		clientId: string;
		clientName?: string;
	}

	export interface Account {
		accountId: string;
		claims(use: string, scope: string): Promise<Record<string, unknown>> | Record<string, unknown>;
	}

	export interface KoaContextLike {
		type: string;
		body: unknown;
		status: number;
		host: string;
	}

	export type Configuration = Record<string, unknown>;

	export interface InteractionResult {
		login?: { accountId: string };
		consent?: { grantId: string };
		error?: string;
		error_description?: string;
	}

	export default class Provider {
		constructor(issuer: string, configuration?: Configuration);
		callback(): (req: IncomingMessage, res: ServerResponse) => void;
		interactionDetails(req: IncomingMessage, res: ServerResponse): Promise<Interaction>;
		interactionFinished(
			req: IncomingMessage,
			res: ServerResponse,
			result: InteractionResult,
			options?: { mergeWithLastSubmission?: boolean }
		): Promise<void>;
		readonly Grant: GrantClass;
		readonly Client: { find(id: string): Promise<ClientInstance | undefined> };
		on(event: string, listener: (...args: unknown[]) => void): this;
	}
}
