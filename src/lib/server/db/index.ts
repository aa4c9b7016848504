import { drizzle, type PostgresJsDatabase } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { env } from '../env';
import * as schema from './schema';

export type Database = PostgresJsDatabase<typeof schema>;

let instance: { db: Database; client: postgres.Sql } | undefined;

function connect() {
	if (!instance) {
		const client = postgres(env().DATABASE_URL, { max: 10, onnotice: () => {} });
		instance = { client, db: drizzle(client, { schema, casing: 'snake_case' }) };
	}
	return instance;
}

/** The client itself, for libraries that check its class (Auth.js's adapter). */
export const getDb = (): Database => connect().db;

/** The one database client of this process, connected on first use. */
export const db: Database = new Proxy({} as Database, {
	get: (_t, prop) => {
		const target = connect().db;
		const value = Reflect.get(target, prop);
		// `constructor` stays unbound: drizzle (and Auth.js's adapter) identify the client by it.
		return typeof value === 'function' && prop !== 'constructor' ? value.bind(target) : value;
	}
});

export async function closeDb() {
	if (instance) await instance.client.end({ timeout: 5 });
	instance = undefined;
}

export async function pingDb(): Promise<boolean> {
	try {
		await connect().client`select 1`;
		return true;
	} catch {
		return false;
	}
}

export { schema };
