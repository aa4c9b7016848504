// The OpenAPI document served by the running app: valid 3.1, one operation for every handler
// under src/routes/api/v1 (found on disk, so a new route without docs fails here), and the
// metadata schema generated from the zod schema that validates uploads.
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { APP_URL } from './support/http';

const API_DIR = join(process.cwd(), 'src/routes/api/v1');
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const;

interface Doc {
	openapi: string;
	paths: Record<string, Record<string, { responses: Record<string, unknown> }>>;
	components: {
		schemas: Record<string, { required?: string[]; properties?: Record<string, unknown> }>;
		securitySchemes: Record<string, { type: string; scheme?: string }>;
	};
}

/** Every `+server.ts` under api/v1 as `METHOD /api/v1/path/{param}`. */
function routesOnDisk(): string[] {
	const found: string[] = [];
	const walk = (dir: string) => {
		for (const entry of readdirSync(dir, { withFileTypes: true })) {
			const full = join(dir, entry.name);
			if (entry.isDirectory()) walk(full);
			else if (entry.name === '+server.ts') {
				const path =
					'/api/v1/' +
					relative(API_DIR, dir)
						.split(sep)
						.map((s) => s.replace(/^\[(\w+)\]$/, '{$1}'))
						.join('/');
				const text = readFileSync(full, 'utf8');
				for (const m of METHODS) {
					if (new RegExp(`export\\s+const\\s+${m}\\b`).test(text)) found.push(`${m} ${path}`);
				}
			}
		}
	};
	walk(API_DIR);
	return found.sort();
}

let doc: Doc;
let contentType: string | null;

beforeAll(async () => {
	const response = await fetch(`${APP_URL}/api/v1/openapi.json`);
	expect(response.status).toBe(200);
	contentType = response.headers.get('content-type');
	doc = JSON.parse(await response.text());
});

describe('GET /api/v1/openapi.json', () => {
	it('is an OpenAPI 3.1 document in JSON, without signing in', () => {
		expect(contentType).toMatch(/application\/json/);
		expect(doc.openapi).toMatch(/^3\.1\.\d+$/);
	});

	it('documents every route file under src/routes/api/v1, and nothing else', () => {
		const onDisk = routesOnDisk();
		expect(onDisk.length).toBeGreaterThanOrEqual(8);
		const documented = Object.entries(doc.paths)
			.flatMap(([path, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${path}`))
			.sort();
		expect(documented).toEqual(onDisk);
	});

	it('uses a bearer scheme and answers errors as problem+json', () => {
		expect(doc.components.securitySchemes.bearer).toMatchObject({ type: 'http', scheme: 'bearer' });
		const upload = doc.paths['/api/v1/measurements'].post as unknown as {
			parameters: { name: string; in: string }[];
			responses: Record<string, { content?: Record<string, unknown> }>;
		};
		expect(upload.parameters).toContainEqual(
			expect.objectContaining({ name: 'Idempotency-Key', in: 'header' })
		);
		for (const status of ['401', '403', '413', '415', '422', '429', '503']) {
			expect(Object.keys(upload.responses[status].content ?? {})).toEqual([
				'application/problem+json'
			]);
		}
		expect(doc.paths['/api/v1/measurements/{id}'].get.responses).toHaveProperty('404');
	});

	it('generates the metadata schema from the zod schema: a profile may stand for laser and C', () => {
		const meta = doc.components.schemas.MeasurementMetadata;
		// Required only when no profile is named, which the schema checks beyond JSON Schema.
		for (const key of ['laser_nm', 'c_factor', 'u_c_factor', 'detector', 'profile'])
			expect(meta.required ?? []).not.toContain(key);
		expect(Object.keys(meta.properties ?? {})).toEqual(
			expect.arrayContaining([
				'profile',
				'calibration',
				'laser_nm',
				'c_factor',
				'modes',
				'material',
				'exposure_stokes_s',
				'exposure_anti_stokes_s'
			])
		);
		expect((meta.properties?.laser_nm as { description?: string }).description).toMatch(/profile/);
	});

	it('describes the reading with the engine’s field names', () => {
		const reading = doc.components.schemas.Reading;
		expect(Object.keys(reading.properties ?? {})).toEqual(
			expect.arrayContaining([
				'temperature_k',
				'u_temperature_k',
				'expanded_uncertainty_k',
				'coverage_factor',
				'budget',
				'flags'
			])
		);
	});
});
