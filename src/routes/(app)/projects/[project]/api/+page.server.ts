import { z } from 'zod';
import { measurementMetadata } from '$lib/measurement-metadata';
import { can } from '$lib/roles';
import { requireProject } from '$lib/server/access';
import {
	MAX_FILE_BYTES,
	MAX_REQUEST_BYTES,
	TOKEN_REQUESTS_PER_MINUTE
} from '$lib/server/measurements/limits';
import { MAX_ROWS, MIN_POINTS } from '$lib/thermometry/parse';
import type { PageServerLoad } from './$types';

interface Property {
	type?: string;
	enum?: unknown[];
	default?: unknown;
	description?: string;
	items?: { type?: string };
	format?: string;
	anyOf?: { type?: string }[];
}

/** The metadata fields as the OpenAPI document has them: from the schema that validates them. */
function metadataFields() {
	const json = z.toJSONSchema(measurementMetadata, { io: 'input' }) as {
		properties: Record<string, Property>;
		required?: string[];
	};
	return Object.entries(json.properties).map(([name, p]) => ({
		name,
		type: p.anyOf
			? p.anyOf.map((a) => a.type ?? 'any').join(' | ')
			: p.enum
				? p.enum.join(' | ')
				: p.type === 'array'
					? `${p.items?.type ?? ''}[]`
					: p.format === 'date-time'
						? 'ISO 8601 date-time'
						: (p.type ?? 'any'),
		required: json.required?.includes(name) ?? false,
		default: p.default === undefined ? null : JSON.stringify(p.default),
		description: p.description ?? ''
	}));
}

export const load: PageServerLoad = async (event) => {
	const { role } = await requireProject(event, 'read');
	return {
		origin: event.url.origin,
		canManage: can(role, 'manage'),
		fields: metadataFields(),
		limits: {
			fileMiB: MAX_FILE_BYTES / 2 ** 20,
			requestMiB: Math.round(MAX_REQUEST_BYTES / 2 ** 20),
			presignedMiB: (MAX_FILE_BYTES * 4) / 2 ** 20,
			minPoints: MIN_POINTS,
			maxRows: MAX_ROWS,
			perMinute: TOKEN_REQUESTS_PER_MINUTE
		}
	};
};
