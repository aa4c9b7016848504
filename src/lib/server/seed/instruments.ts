import { createConstantCalibration } from '../calibrations';
import { createProfile } from '../instruments';

/**
 * The demo's instrument: the thin-film lab's confocal bench at 532 nm with a constant response
 * ratio from its (invented) optics certificate. The film measurements name it as their profile.
 */
export const DEMO_PROFILE = 'Confocal bench 532';

export async function seedDemoInstruments(projectId: number, ownerId: string) {
	const { profile } = await createProfile(
		projectId,
		{
			name: DEMO_PROFILE,
			laser_nm: 532,
			detector: 'photon-counting',
			filter_cutoff_cm1: 80,
			optics_notes: '50× objective (NA 0.75), 1800 l/mm grating, long-pass edge filter.',
			notes: 'Demo instrument of the Halvorsen thin-film lab.'
		},
		ownerId
	);
	await createConstantCalibration(
		projectId,
		profile.id,
		{
			c: 1,
			u_c: 0.02,
			source: 'Bench optics certificate HB-2026-07 (demo)',
			valid_from: new Date(Date.UTC(2026, 6, 1)),
			valid_until: new Date(Date.UTC(2027, 6, 1)),
			notes: ''
		},
		ownerId
	);
}
