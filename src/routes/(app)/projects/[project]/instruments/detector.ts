/** Why the detector decides the exponent n of the frequency factor (physics.md §1.1). */
export const DETECTOR_CHOICES = [
	{
		value: 'photon-counting',
		label: 'Photon counting — exponent 3',
		why: 'CCD, CMOS, PMT, APD and InGaAs arrays count photons, whose rate goes as the scattered frequency cubed, so the ratio uses n = 3 (nearly every modern dispersive Raman system).'
	},
	{
		value: 'energy',
		label: 'Energy detection — exponent 4',
		why: 'A detector of radiant power or energy, or spectra converted to energy units (also by a response correction certified in energy units), sees the full fourth power: n = 4.'
	}
] as const;
