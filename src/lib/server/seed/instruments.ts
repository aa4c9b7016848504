import { laserWavenumber } from '../../thermometry/constants';
import { radiancePhotonWavenumber } from '../../thermometry/planck';
import { wavelengthUniformAxis } from '../../thermometry/synthetic';
import { createConstantCalibration, createLampCalibration } from '../calibrations';
import { createProfile } from '../instruments';

/**
 * The demo's instrument: the thin-film lab's confocal bench at 532 nm with a constant response
 * ratio from its (invented) optics certificate, later checked with a tungsten lamp. The film
 * measurements name it as their profile.
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
	await createLampCalibration(
		projectId,
		profile.id,
		{
			reference: 'colour-temperature',
			colour_temperature_k: 2856,
			u_colour_temperature_k: 20,
			u_table_percent: undefined,
			u_percent: 0.5,
			mode_cm1: 520.7,
			axis: 'raman-shift',
			valid_from: new Date(Date.UTC(2026, 8, 1)),
			valid_until: new Date(Date.UTC(2027, 2, 1)),
			notes: 'Quarterly lamp check of the bench (demo).'
		},
		{ name: 'bench-lamp-2856K.csv', text: demoLampSpectrum() },
		ownerId
	);
}

/**
 * A tungsten lamp at 2856 K seen through an invented response that is even in the shift, so the
 * lamp gives C = 1 as the certificate does (the demo spectra were made with C = 1).
 */
function demoLampSpectrum(): string {
	const laserNm = 532;
	const nuL = laserWavenumber(laserNm);
	const axis = wavelengthUniformAxis(laserNm, -1200, 1200, 1024);
	const response = (shift: number) => 0.78 + 0.2 * Math.cos(shift / 800);
	const n = axis.length;
	const photons = Array.from(axis, (s, i) => {
		const width =
			(axis[Math.min(i + 1, n - 1)] - axis[Math.max(i - 1, 0)]) / (i === 0 || i === n - 1 ? 1 : 2);
		return response(s) * radiancePhotonWavenumber((nuL - s) * 100, 2856) * width;
	});
	const top = Math.max(...photons);
	return (
		'# demo lamp spectrum, dark-subtracted (Phonotherm seed)\nraman_shift_cm-1,counts\n' +
		Array.from(axis, (s, i) => `${s.toFixed(3)},${((40000 * photons[i]) / top).toFixed(1)}`).join(
			'\n'
		)
	);
}
