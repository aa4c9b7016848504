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

/** The one database client of this process. */
export const db: Database = new Proxy({} as Database, {
	get: (_t, prop) => {
		const target = connect().db;
		const value = Reflect.get(target, prop);
		return typeof value === 'function' ? value.bind(target) : value;
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
