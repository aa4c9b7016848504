import type { z } from 'zod';

/**
 * The upload form's text fields and how they become the API's metadata object. Field names are
 * the metadata's own snake_case keys, so a zod issue's path names the field it belongs beside.
 * Used by the action and, for the preview, by the browser.
 */

export const NUMBER_FIELDS = [
	'laser_nm',
	'exposure_stokes_s',
	'exposure_anti_stokes_s',
	'dark_counts',
	'laser_power_mw',
	'x',
	'y',
	'c_factor',
	'u_c_factor'
] as const;
export const TEXT_FIELDS = ['label', 'batch', 'series'] as const;
export const CHOICE_FIELDS = ['profile', 'material', 'detector', 'lineshape', 'x_axis'] as const;
export const FIELDS = [
	...NUMBER_FIELDS,
	...TEXT_FIELDS,
	...CHOICE_FIELDS,
	'modes',
	'acquired_at',
	'tz_offset_min'
] as const;
export type FieldName = (typeof FIELDS)[number];

const blank = (v: string | undefined) => v === undefined || v.trim() === '';

/** A number when the text is one; otherwise the text itself, so the schema says what is wrong. */
function number(v: string): number | string {
	const n = Number(v.trim());
	return v.trim() !== '' && Number.isFinite(n) ? n : v;
}

/** `2026-12-01T14:30` from a datetime-local input, in the browser's zone, as ISO 8601 UTC. */
function instant(local: string, offsetMin: number): string {
	const ms = Date.parse(/T\d\d:\d\d$/.test(local) ? `${local}:00Z` : `${local}Z`);
	return Number.isNaN(ms) ? local : new Date(ms + offsetMin * 60_000).toISOString();
}

export function metadataFromFields(get: (name: FieldName) => string | undefined) {
	const out: Record<string, unknown> = {};
	for (const name of NUMBER_FIELDS) {
		const v = get(name);
		if (!blank(v)) out[name] = number(v!);
	}
	for (const name of [...TEXT_FIELDS, ...CHOICE_FIELDS]) {
		const v = get(name);
		if (!blank(v)) out[name] = v!.trim();
	}
	// The profile select sends the profile's id.
	if (typeof out.profile === 'string' && /^\d+$/.test(out.profile))
		out.profile = Number(out.profile);
	const modes = get('modes');
	if (!blank(modes))
		out.modes = modes!
			.trim()
			.split(/[\s,;]+/)
			.map(number);
	const at = get('acquired_at');
	if (!blank(at)) out.acquired_at = instant(at!.trim(), Number(get('tz_offset_min') ?? 0) || 0);
	return out;
}

/** What each field is called on the page (a zod message that names the key reads with this). */
export const LABELS: Record<string, string> = {
	laser_nm: 'Laser wavelength',
	profile: 'Instrument profile',
	modes: 'Mode',
	material: 'Material',
	detector: 'Detector',
	lineshape: 'Lineshape',
	x_axis: 'x axis',
	exposure_stokes_s: 'Stokes exposure',
	exposure_anti_stokes_s: 'Anti-Stokes exposure',
	dark_counts: 'Dark level',
	laser_power_mw: 'Laser power',
	label: 'Sample label',
	batch: 'Batch',
	series: 'Series',
	x: 'x',
	y: 'y',
	acquired_at: 'Acquisition time',
	c_factor: 'Response ratio C',
	u_c_factor: 'u(C)'
};

/** zod issues by form field: the first path segment is the metadata key, i.e. the field name. */
export function issuesByField(error: z.ZodError): Record<string, string[]> {
	const out: Record<string, string[]> = {};
	for (const issue of error.issues) {
		const field = String(issue.path[0] ?? 'form');
		const text = issue.message.replace(new RegExp(`^${field}\\b`), LABELS[field] ?? field);
		const message =
			issue.path.length > 1 && field === 'modes'
				? `Mode ${Number(issue.path[1]) + 1}: ${text}`
				: text;
		(out[field] ??= []).push(message);
	}
	return out;
}
