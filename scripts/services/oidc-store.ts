// The issuer's short-lived state (interactions, sessions, codes, tokens) in this process's
// memory. Losing it on restart only means signing in at the issuer again; the app keeps its own
// sessions. One store per issuer, so two issuers in one process (tests) never mix.

interface Payload {
	uid?: string;
	userCode?: string;
	grantId?: string;
	consumed?: number;
	[key: string]: unknown;
}

interface Entry {
	payload: Payload;
	expiresAt: number;
}

export function createOidcStore() {
	const entries = new Map<string, Entry>();
	const sessionByUid = new Map<string, string>();
	const grantMembers = new Map<string, Set<string>>();

	const live = (key: string): Payload | undefined => {
		const entry = entries.get(key);
		if (!entry) return undefined;
		if (entry.expiresAt <= Date.now()) {
			entries.delete(key);
			return undefined;
		}
		return entry.payload;
	};

	return class OidcStore {
		constructor(private readonly model: string) {}

		private key(id: string) {
			return `${this.model}:${id}`;
		}

		async upsert(id: string, payload: Payload, expiresIn?: number) {
			const key = this.key(id);
			const expiresAt = typeof expiresIn === 'number' ? Date.now() + expiresIn * 1000 : Infinity;
			entries.set(key, { payload, expiresAt });
			if (this.model === 'Session' && payload.uid) sessionByUid.set(payload.uid, id);
			if (payload.userCode) sessionByUid.set(`userCode:${payload.userCode}`, id);
			if (payload.grantId) {
				const members = grantMembers.get(payload.grantId) ?? new Set<string>();
				members.add(key);
				grantMembers.set(payload.grantId, members);
			}
		}

		async find(id: string) {
			return live(this.key(id));
		}

		async findByUid(uid: string) {
			const id = sessionByUid.get(uid);
			return id ? live(this.key(id)) : undefined;
		}

		async findByUserCode(userCode: string) {
			const id = sessionByUid.get(`userCode:${userCode}`);
			return id ? live(this.key(id)) : undefined;
		}

		async consume(id: string) {
			const payload = live(this.key(id));
			if (payload) payload.consumed = Math.floor(Date.now() / 1000);
		}

		async destroy(id: string) {
			const key = this.key(id);
			const payload = entries.get(key)?.payload;
			entries.delete(key);
			if (payload?.uid && sessionByUid.get(payload.uid) === id) sessionByUid.delete(payload.uid);
		}

		async revokeByGrantId(grantId: string) {
			for (const key of grantMembers.get(grantId) ?? []) entries.delete(key);
			grantMembers.delete(grantId);
		}
	};
}
