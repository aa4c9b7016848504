/** Plain words for the audit log's action codes; an unknown code is shown as it is. */
export const ACTION_LABELS: Record<string, string> = {
	'project.create': 'created the project',
	'project.settings': 'changed the project settings',
	'member.invite': 'invited a member',
	'member.join': 'joined the project',
	'member.role': 'changed a role',
	'member.remove': 'removed a member',
	'token.create': 'created an acquisition token',
	'token.revoke': 'revoked an acquisition token',
	'measurement.upload': 'uploaded a measurement',
	'measurement.reanalyse': 'requested a re-analysis',
	'reading.create': 'reading fitted',
	'reading.approve': 'approved a reading',
	'reading.return': 'returned a reading',
	'instrument.create': 'added an instrument profile',
	'instrument.version': 'edited an instrument profile',
	'material.create': 'added a material',
	'calibration.create': 'added a response calibration',
	'calibration.retire': 'retired a response calibration'
};

export const actionLabel = (action: string) => ACTION_LABELS[action] ?? action;

/**
 * A JSON value on one line for a compact before/after: hashes and ids cut to their first
 * characters, fractions to six significant digits, the whole to `max` characters.
 */
export function compactJson(value: unknown, max = 160): string {
	if (value == null) return '';
	const text = JSON.stringify(value, (_k, v) => {
		if (typeof v === 'string' && /^[0-9a-f-]{32,}$/i.test(v)) return `${v.slice(0, 8)}…`;
		if (typeof v === 'string' && v.length > 60) return `${v.slice(0, 57)}…`;
		if (typeof v === 'number' && !Number.isInteger(v)) return Number(v.toPrecision(6));
		return v;
	});
	return text.length > max ? `${text.slice(0, max - 1)}…` : text;
}
