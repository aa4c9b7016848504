// The people of the local single sign-on stand-in: staff of a fictional institute that signs its
// researchers in through its own identity provider. Tests import this list; `npm start` prints it.
// Kept apart from oidc.ts so that importing it does not load oidc-provider.

export interface SsoAccount {
	/** The stable subject identifier the issuer hands out (`sub`). */
	sub: string;
	email: string;
	password: string;
	name: string;
	givenName: string;
	familyName: string;
	/** What they do at the institute; only for the printed list. */
	title: string;
}

export const SSO_INSTITUTE = 'Halvorsen Institute for Applied Optics';

export const SSO_ACCOUNTS: readonly SsoAccount[] = [
	{
		sub: 'hio-10231',
		email: 'mira.okafor@halvorsen.example',
		password: 'okafor-spectra-7',
		name: 'Mira Okafor',
		givenName: 'Mira',
		familyName: 'Okafor',
		title: 'group leader, laser-heated thin films'
	},
	{
		sub: 'hio-10458',
		email: 'jonas.lindqvist@halvorsen.example',
		password: 'lindqvist-phonon-3',
		name: 'Jonas Lindqvist',
		givenName: 'Jonas',
		familyName: 'Lindqvist',
		title: 'process engineer, catalyst beds'
	},
	{
		sub: 'hio-10602',
		email: 'aiko.tanabe@halvorsen.example',
		password: 'tanabe-stokes-5',
		name: 'Aiko Tanabe',
		givenName: 'Aiko',
		familyName: 'Tanabe',
		title: 'doctoral researcher, power devices'
	},
	{
		sub: 'hio-10777',
		email: 'rafael.duarte@halvorsen.example',
		password: 'duarte-boltzmann-9',
		name: 'Rafael Duarte',
		givenName: 'Rafael',
		familyName: 'Duarte',
		title: 'instrument scientist, spectrometer calibration'
	}
];

export function findSsoAccount(email: string): SsoAccount | undefined {
	const wanted = email.trim().toLowerCase();
	return SSO_ACCOUNTS.find((account) => account.email === wanted);
}
