/**
 * Who may do what in a project. Roles are cumulative: each one can do everything the one
 * before it can. This table is the only place the rule lives; the server guards and the
 * pages (to hide controls a person cannot use) both read it.
 */
export const ROLES = ['viewer', 'analyst', 'reviewer', 'owner'] as const;
export type Role = (typeof ROLES)[number];

export const CAPABILITIES = {
	read: 'viewer',
	upload: 'analyst',
	reanalyse: 'analyst',
	'sign-off': 'reviewer',
	manage: 'owner'
} as const satisfies Record<string, Role>;
export type Capability = keyof typeof CAPABILITIES;

export function can(role: Role | null | undefined, capability: Capability): boolean {
	if (!role) return false;
	return ROLES.indexOf(role) >= ROLES.indexOf(CAPABILITIES[capability]);
}

export const ROLE_SUMMARY: Record<Role, string> = {
	viewer: 'Reads measurements, readings and reports.',
	analyst: 'Also uploads measurements and re-analyses them.',
	reviewer: 'Also signs off readings or returns them with a comment.',
	owner: 'Also manages members, roles and acquisition tokens.'
};

/** Scopes an acquisition token can carry. */
export const TOKEN_SCOPES = ['measurements:write', 'measurements:read'] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];
