import { z } from 'zod';
import { measurementMetadata, reanalysisSettings } from '../measurement-metadata';
import { TOKEN_SCOPES } from '../roles';
import { SERIES_KINDS } from '../series/kind';
import {
	MAX_FILE_BYTES,
	MAX_REQUEST_BYTES,
	TOKEN_REQUESTS_PER_MINUTE
} from './measurements/limits';
import { seriesReadingRow } from './measurements/export';
import { fromUploads, uploadRequest } from './measurements/requests';
import { listFilters } from './measurements/views';
import { seriesDetail, seriesList, seriesResponse } from './series-json';
import { seriesBody } from './series-store';

/**
 * The OpenAPI 3.1 document of /api/v1. Request schemas are the zod schemas the routes validate
 * with, turned into JSON Schema 2020-12 (OpenAPI 3.1's dialect) by zod itself; the response
 * schemas below describe what `views.ts` builds, with the engine's field names for the reading.
 */

const PART = z.enum(['stokes', 'anti_stokes', 'combined', 'dark']);
const STATUS = z.enum(['queued', 'analysing', 'done', 'failed']);
const nullableNumber = z.number().nullable();

const problemDetails = z
	.object({
		type: z.string().describe('Always `about:blank`: the status code says what kind of problem.'),
		title: z.string(),
		status: z.number().int(),
		detail: z.string().describe('One sentence that says what to change.'),
		instance: z.string().optional().describe('The request path.'),
		code: z.string().optional().describe('Stable code of a refused file (e.g. `not-numeric`).'),
		file: z.string().optional().describe('The file the problem is in.'),
		row: z.number().int().optional().describe('1-based line of the file (point for JCAMP-DX).'),
		errors: z
			.array(z.object({ pointer: z.string(), detail: z.string() }))
			.optional()
			.describe('Each invalid field, as a JSON pointer into the request.')
	})
	.describe('RFC 9457 problem details.');

const flag = z.object({
	code: z.string(),
	severity: z.enum(['info', 'warning', 'error']),
	message: z.string(),
	mode_cm1: z.number().optional()
});

const budgetRow = z.object({
	input: z.string(),
	label: z.string(),
	value: z.number(),
	unit: z.string(),
	standard_uncertainty: z.number(),
	sensitivity: z.number().describe('∂T/∂x in K per unit of the input.'),
	contribution_k: z.number(),
	variance_share: z.number().describe('Share of u²(T), 0…1.')
});

const fittedBand = z.object({
	side: z.enum(['stokes', 'anti-stokes']),
	center_cm1: z.number(),
	u_center_cm1: z.number(),
	fwhm_cm1: z.number(),
	u_fwhm_cm1: z.number(),
	area: z.number().describe('Band area, counts/s.'),
	u_area: z.number(),
	height: z.number(),
	eta: z.number().optional(),
	baseline: z.object({ a: z.number(), b: z.number() }),
	reduced_chi2: z.number(),
	points: z.number().int()
});

const estimate = z.object({
	temperature_k: z.number(),
	u_temperature_k: z.number(),
	ratio: z.number(),
	u_ratio: z.number()
});

const modeResult = z.object({
	mode_cm1: z.number(),
	shift_cm1: z.number(),
	u_shift_cm1: z.number(),
	temperature_k: nullableNumber,
	u_temperature_k: nullableNumber,
	axis_offset_cm1: z.number().optional(),
	u_axis_offset_cm1: z.number().optional(),
	joint: estimate
		.extend({ u_statistical_k: z.number(), converged: z.boolean(), iterations: z.number().int() })
		.optional(),
	peak_shift: z
		.object({ temperature_k: z.number(), u_temperature_k: z.number(), model: z.string() })
		.optional(),
	stokes: fittedBand,
	anti_stokes: fittedBand,
	separate: estimate.optional(),
	budget: z.array(budgetRow),
	reduced_chi2: z.number()
});

const profileList = z.object({
	profiles: z.array(
		z.object({
			id: z.number().int(),
			name: z.string(),
			version: z.number().int(),
			laser_nm: z.number(),
			detector: z.enum(['photon-counting', 'energy']),
			filter_cutoff_cm1: z.number(),
			calibrations: z.array(
				z.object({
					id: z.number().int(),
					method: z.enum(['constant', 'reference-run', 'response-curve', 'lamp']),
					c: z.number(),
					u_c: z.number(),
					mode_cm1: nullableNumber.describe('The band it holds for; null for a constant.'),
					valid_from: z.iso.datetime(),
					valid_until: z.iso.datetime().nullable()
				})
			)
		})
	)
});

const decision = z.object({
	decision: z.enum(['approved', 'returned']),
	reviewer: z.string().nullable().describe('Name (or e-mail) of the reviewer; null once removed.'),
	decided_at: z.iso.datetime(),
	comment: z.string()
});

const signOff = z
	.object({
		state: z
			.enum(['approved', 'returned', 'awaiting', 'not-required'])
			.describe(
				'The newest decision, or `awaiting` (none yet) / `not-required` (the project asks for none). An approved reading is locked.'
			),
		reviewer: z.string().nullable(),
		decided_at: z.iso.datetime().nullable(),
		comment: z.string().nullable(),
		decisions: z.array(decision).describe('Every decision on this reading, newest first.')
	})
	.describe('A reviewer’s sign-off of this reading.');

export const readingResponse = z
	.object({
		id: z.string(),
		measurement_id: z.string().uuid(),
		created_at: z.iso.datetime(),
		engine_version: z.string(),
		method: z.string().describe('The estimator, e.g. `joint-fit` or `separate-bands`.'),
		exponent: z.union([z.literal(3), z.literal(4)]),
		lineshape: z.enum(['lorentzian', 'gaussian', 'pseudo-voigt']),
		laser_nm: z.number(),
		temperature_k: nullableNumber.describe('null when the data cannot support a temperature.'),
		u_temperature_k: nullableNumber.describe('Standard uncertainty, K.'),
		expanded_uncertainty_k: nullableNumber.describe('U = k·u, K.'),
		coverage_factor: z.number(),
		modes: z.array(modeResult),
		budget: z.array(budgetRow).describe('GUM budget of the reported temperature.'),
		birge_ratio: z.number().optional(),
		flags: z.array(flag),
		monte_carlo: z
			.object({
				trials: z.number().int(),
				seed: z.number().int(),
				mean_k: z.number(),
				sd_k: z.number(),
				interval_95_k: z.tuple([z.number(), z.number()]),
				histogram: z.object({ edges: z.array(z.number()), counts: z.array(z.number()) }),
				invalid_trials: z.number().int().optional()
			})
			.optional(),
		spikes_removed: z.number().int(),
		profile: z
			.object({
				id: z.number().int(),
				name: z.string(),
				version: z.number().int(),
				version_id: z.number().int(),
				laser_nm: z.number(),
				detector: z.enum(['photon-counting', 'energy']),
				filter_cutoff_cm1: z.number()
			})
			.nullable()
			.optional()
			.describe('The instrument profile version the settings came from; null when none was named.'),
		calibration: z
			.object({
				id: z.number().int(),
				method: z.enum(['constant', 'reference-run', 'response-curve', 'lamp']),
				c: z.number(),
				u_c: z.number(),
				mode_cm1: nullableNumber.describe('The band it was made at; null for a constant.'),
				valid_from: z.iso.datetime(),
				valid_until: z.iso.datetime().nullable(),
				status: z
					.enum(['active', 'retired'])
					.describe(
						'The calibration’s status now, not when the reading was made: a calibration retired later still stands behind the readings made with it.'
					)
			})
			.nullable()
			.optional()
			.describe('The response calibration C ± u came from; null when C came with the measurement.'),
		sign_off: signOff
			.optional()
			.describe('On the reading endpoint itself; not in measurement listings.')
	})
	.describe('A reading, in the engine’s own field names.');

const links = z.object({ self: z.url(), reading: z.url() });

export const measurementResponse = z.object({
	id: z.string().uuid(),
	status: STATUS,
	created_at: z.iso.datetime(),
	label: z.string().nullable(),
	batch: z.string().nullable(),
	series: z.string().nullable(),
	x: nullableNumber,
	y: nullableNumber,
	laser_power_mw: nullableNumber,
	acquired_at: z.iso.datetime().nullable(),
	metadata: z.record(z.string(), z.unknown()).describe('The metadata as uploaded, with defaults.'),
	files: z.array(
		z.object({ part: PART, file_name: z.string(), bytes: z.number().int(), sha256: z.string() })
	),
	failure: z.object({ code: z.string(), message: z.string() }).nullable(),
	reading: readingResponse.nullable(),
	links
});

const measurementCreated = z.object({
	id: z.string().uuid(),
	status: STATUS,
	created: z.boolean().describe('false when an Idempotency-Key replayed an earlier upload.'),
	links
});

const measurementList = z.object({
	items: z.array(measurementResponse),
	next_cursor: z.string().nullable(),
	links: z.object({ next: z.url().nullable() })
});

const uploadsResponse = z.object({
	uploads: z.array(
		z.object({
			part: PART,
			upload_key: z.string(),
			url: z.url(),
			method: z.literal('PUT'),
			expires_in_s: z.number().int()
		})
	)
});

const whoamiResponse = z.object({
	project: z.object({ slug: z.string(), name: z.string() }),
	token: z.object({ name: z.string(), prefix: z.string(), scopes: z.array(z.enum(TOKEN_SCOPES)) })
});

/** zod → JSON Schema 2020-12 as the request side sees it (defaults optional, coercions as input). */
function schema(s: z.ZodType, io: 'input' | 'output' = 'input') {
	const json = z.toJSONSchema(s, { io, unrepresentable: 'any' }) as Record<string, unknown>;
	delete json.$schema;
	return json;
}

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });
const jsonBody = (name: string) => ({ 'application/json': { schema: ref(name) } });

const ERROR_TEXT: Record<number, string> = {
	400: 'The request is malformed (a bad header or cursor).',
	401: 'No token, a malformed Authorization header, or an unknown or revoked token.',
	403: 'The token lacks the scope this operation needs.',
	404: 'This project has nothing at that path (other projects’ measurements are not visible).',
	409: 'The analysis failed, so there is no reading; `failure` says why.',
	413: `A file is larger than ${MAX_FILE_BYTES / 2 ** 20} MiB, or the request larger than ${Math.round(MAX_REQUEST_BYTES / 2 ** 20)} MiB.`,
	415: 'The body is neither multipart/form-data nor JSON.',
	422: 'Invalid metadata (each field in `errors`) or a file the engine refuses (`code`, `file`, `row`).',
	429: `The token made more than ${TOKEN_REQUESTS_PER_MINUTE} requests in a minute; see Retry-After.`,
	503: 'Storage or the database is unavailable; nothing was stored. Retry with the same Idempotency-Key.'
};

function errors(...codes: number[]) {
	return Object.fromEntries(
		codes.map((c) => [
			String(c),
			{
				description: ERROR_TEXT[c],
				...(c === 429 ? { headers: { 'Retry-After': { schema: { type: 'integer' } } } } : {}),
				content: { 'application/problem+json': { schema: ref('Problem') } }
			}
		])
	);
}

/** Query parameters from a zod object schema, one per property. */
function queryParameters(s: z.ZodObject) {
	const json = schema(s) as { properties: Record<string, Record<string, unknown>> };
	return Object.entries(json.properties).map(([name, p]) => ({
		name,
		in: 'query',
		required: false,
		description: p.description,
		schema: p
	}));
}

const seriesReadings = z.object({
	project: z.string().describe('The project slug.'),
	series: z.string(),
	kind: z.enum(SERIES_KINDS),
	readings: z.array(seriesReadingRow).describe('One per measurement, in the series’ order.')
});

const seriesParameter = {
	name: 'name',
	in: 'path',
	required: true,
	description: 'The series name, URL-encoded.',
	schema: { type: 'string' }
};

const idParameter = {
	name: 'id',
	in: 'path',
	required: true,
	description: 'The measurement id (UUID).',
	schema: { type: 'string', format: 'uuid' }
};

export function openApiDocument(origin: string) {
	const csvFilters = listFilters.omit({ cursor: true, limit: true });
	return {
		openapi: '3.1.0',
		info: {
			title: 'Phonotherm API',
			version: '1',
			summary: 'Anti-Stokes/Stokes Raman thermometry for acquisition PCs.',
			description:
				'Post a Stokes/anti-Stokes spectrum pair with its metadata; a worker fits it and the reading appears at the measurement’s `reading` link. Every error is RFC 9457 problem+json with a sentence that says what to change. Temperatures for safety decisions need a licensed or accredited method.'
		},
		servers: [{ url: origin }],
		security: [{ bearer: [] }],
		tags: [{ name: 'measurements' }, { name: 'series' }, { name: 'tokens' }, { name: 'meta' }],
		paths: {
			'/api/v1/whoami': {
				get: {
					tags: ['tokens'],
					operationId: 'whoami',
					summary: 'The project and scopes of the calling token',
					responses: {
						'200': { description: 'The token is valid.', content: jsonBody('Whoami') },
						...errors(401, 429)
					}
				}
			},
			'/api/v1/profiles': {
				get: {
					tags: ['measurements'],
					operationId: 'listProfiles',
					summary: 'The instrument profiles a measurement may name, with their active calibrations',
					description:
						'Each profile’s newest version. A measurement’s `profile` takes the name or id; its `calibration` one of the ids listed (else the newest active one that holds for the band). Needs the `measurements:read` scope.',
					responses: {
						'200': { description: 'The project’s profiles.', content: jsonBody('ProfileList') },
						...errors(401, 403, 429)
					}
				}
			},
			'/api/v1/measurements': {
				post: {
					tags: ['measurements'],
					operationId: 'createMeasurement',
					summary: 'Upload a spectrum pair (or one combined file) for analysis',
					description:
						'Multipart: file parts `stokes` and `anti_stokes`, or `combined`, optionally `dark`, and a JSON part `metadata`. Or JSON naming files put through POST /api/v1/uploads. Needs the `measurements:write` scope.',
					parameters: [
						{
							name: 'Idempotency-Key',
							in: 'header',
							required: false,
							description:
								'Any 1–200 printable ASCII characters, new for each measurement. A retry with the same key and the same body returns the first measurement (created: false); the same key with a different body is refused (422).',
							schema: { type: 'string', minLength: 1, maxLength: 200, pattern: '^[\\x21-\\x7e]+$' }
						}
					],
					requestBody: {
						required: true,
						content: {
							'multipart/form-data': { schema: ref('MeasurementUpload') },
							'application/json': { schema: ref('FromUploads') }
						}
					},
					responses: {
						'202': {
							description: 'Stored and queued for analysis; poll `links.reading`.',
							headers: { Location: { schema: { type: 'string', format: 'uri' } } },
							content: jsonBody('MeasurementCreated')
						},
						...errors(400, 401, 403, 413, 415, 422, 429, 503)
					}
				},
				get: {
					tags: ['measurements'],
					operationId: 'listMeasurements',
					summary: 'The project’s measurements, newest first, with their newest reading',
					parameters: queryParameters(listFilters),
					responses: {
						'200': { description: 'One page.', content: jsonBody('MeasurementList') },
						...errors(400, 401, 403, 422, 429)
					}
				}
			},
			'/api/v1/measurements/{id}': {
				get: {
					tags: ['measurements'],
					operationId: 'getMeasurement',
					summary: 'Status, files and the newest reading of one measurement',
					parameters: [idParameter],
					responses: {
						'200': { description: 'The measurement.', content: jsonBody('Measurement') },
						...errors(401, 403, 404, 429)
					}
				}
			},
			'/api/v1/measurements/{id}/reading': {
				get: {
					tags: ['measurements'],
					operationId: 'getReading',
					summary: 'The newest reading of a measurement',
					description:
						'404 with `status_of_measurement` while it is queued or analysing: poll again. 409 when the analysis failed.',
					parameters: [idParameter],
					responses: {
						'200': { description: 'The reading.', content: jsonBody('Reading') },
						...errors(401, 403, 404, 409, 429)
					}
				}
			},
			'/api/v1/uploads': {
				post: {
					tags: ['measurements'],
					operationId: 'presignUploads',
					summary: 'Presigned PUT URLs for files too large for one request',
					description:
						'PUT each file to its URL, then POST /api/v1/measurements with JSON `{ metadata, uploads: { part: upload_key } }`. URLs expire after an hour.',
					requestBody: { required: true, content: jsonBody('UploadRequest') },
					responses: {
						'201': { description: 'One URL per file.', content: jsonBody('Uploads') },
						...errors(401, 403, 422, 429)
					}
				}
			},
			'/api/v1/readings.csv': {
				get: {
					tags: ['measurements'],
					operationId: 'exportReadings',
					summary: 'The project’s readings as CSV',
					parameters: queryParameters(csvFilters),
					responses: {
						'200': {
							description: 'One row per measurement with a reading.',
							content: { 'text/csv': { schema: { type: 'string' } } }
						},
						...errors(401, 403, 422, 429)
					}
				}
			},
			'/api/v1/series': {
				get: {
					tags: ['series'],
					operationId: 'listSeries',
					summary: 'The project’s series with their kinds and limits',
					responses: {
						'200': { description: 'Every series.', content: jsonBody('SeriesList') },
						...errors(401, 403, 429)
					}
				},
				post: {
					tags: ['series'],
					operationId: 'createSeries',
					summary: 'Create a series; measurements join it by naming it in `metadata.series`',
					description:
						'Needs the `measurements:write` scope. Specification limits are set by a project owner on the series page; a token that sends them is refused (403). A measurement naming a series that does not exist yet makes one, with the kind inferred from its metadata.',
					requestBody: { required: true, content: jsonBody('SeriesCreate') },
					responses: {
						'201': {
							description: 'Created.',
							headers: { Location: { schema: { type: 'string', format: 'uri' } } },
							content: jsonBody('Series')
						},
						'409': {
							description: 'The project already has a series with that name.',
							content: { 'application/problem+json': { schema: ref('Problem') } }
						},
						...errors(400, 401, 403, 415, 422, 429)
					}
				}
			},
			'/api/v1/series/{name}': {
				get: {
					tags: ['series'],
					operationId: 'getSeries',
					summary: 'One series with its points in columns (newest reading of each measurement)',
					parameters: [seriesParameter],
					responses: {
						'200': { description: 'The series.', content: jsonBody('SeriesDetail') },
						...errors(401, 403, 404, 429)
					}
				}
			},
			'/api/v1/series/{name}/readings.csv': {
				get: {
					tags: ['series'],
					operationId: 'exportSeriesReadingsCsv',
					summary: 'A series’ readings as CSV',
					description:
						'The columns of SeriesReadings rows, in that order; empty for null, lists space-separated, numbers at full precision.',
					parameters: [seriesParameter],
					responses: {
						'200': {
							description: 'One row per measurement of the series, with its newest reading.',
							content: { 'text/csv': { schema: { type: 'string' } } }
						},
						...errors(401, 403, 404, 429)
					}
				}
			},
			'/api/v1/series/{name}/readings.json': {
				get: {
					tags: ['series'],
					operationId: 'exportSeriesReadingsJson',
					summary: 'A series’ readings as JSON',
					parameters: [seriesParameter],
					responses: {
						'200': {
							description: 'One row per measurement of the series, with its newest reading.',
							content: jsonBody('SeriesReadings')
						},
						...errors(401, 403, 404, 429)
					}
				}
			},
			'/api/v1/openapi.json': {
				get: {
					tags: ['meta'],
					operationId: 'openApi',
					summary: 'This document',
					security: [],
					responses: {
						'200': {
							description: 'OpenAPI 3.1.',
							content: { 'application/json': { schema: { type: 'object' } } }
						}
					}
				}
			}
		},
		components: {
			securitySchemes: {
				bearer: {
					type: 'http',
					scheme: 'bearer',
					description: `An acquisition token (starts with \`pt_\`) made by a project owner on the project’s “Acquisition tokens” page. Scopes: ${TOKEN_SCOPES.join(', ')}.`
				}
			},
			schemas: {
				MeasurementMetadata: schema(measurementMetadata),
				ReanalysisSettings: schema(reanalysisSettings),
				MeasurementUpload: {
					type: 'object',
					description: 'Either `stokes` and `anti_stokes`, or `combined`; `dark` is optional.',
					properties: {
						metadata: {
							...ref('MeasurementMetadata'),
							description: 'JSON text (send the part as application/json).'
						},
						stokes: { type: 'string', contentMediaType: 'application/octet-stream' },
						anti_stokes: { type: 'string', contentMediaType: 'application/octet-stream' },
						combined: { type: 'string', contentMediaType: 'application/octet-stream' },
						dark: { type: 'string', contentMediaType: 'application/octet-stream' }
					},
					required: ['metadata']
				},
				FromUploads: {
					...schema(fromUploads),
					properties: {
						...(schema(fromUploads).properties as object),
						metadata: ref('MeasurementMetadata')
					}
				},
				UploadRequest: schema(uploadRequest),
				ListFilters: schema(listFilters),
				Uploads: schema(uploadsResponse, 'output'),
				Whoami: schema(whoamiResponse, 'output'),
				ProfileList: schema(profileList, 'output'),
				MeasurementCreated: schema(measurementCreated, 'output'),
				Measurement: schema(measurementResponse, 'output'),
				MeasurementList: schema(measurementList, 'output'),
				Reading: schema(readingResponse, 'output'),
				SeriesCreate: schema(seriesBody),
				Series: schema(seriesResponse, 'output'),
				SeriesList: schema(seriesList, 'output'),
				SeriesDetail: schema(seriesDetail, 'output'),
				SeriesReadings: schema(seriesReadings, 'output'),
				Problem: schema(problemDetails, 'output')
			}
		}
	};
}
