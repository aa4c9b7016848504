/**
 * Physical constants of the 2019 SI. h, c and k_B are exact by definition, so c₂ = hc/k_B is
 * exact too; we compute it from them rather than typing a rounded decimal.
 */

/** Planck constant, J s (exact, SI 2019). */
export const PLANCK_H = 6.62607015e-34;
/** Speed of light in vacuum, m/s (exact since 1983). */
export const SPEED_OF_LIGHT_C = 299_792_458;
/** Boltzmann constant, J/K (exact, SI 2019). */
export const BOLTZMANN_K = 1.380649e-23;

/** Second radiation constant c₂ = hc/k_B in cm·K (the m·K value times 100). */
export const C2_CM_K = ((PLANCK_H * SPEED_OF_LIGHT_C) / BOLTZMANN_K) * 100;

/** Version of the estimator, stored with every reading so a re-analysis can be told apart. */
export const ENGINE_VERSION = '0.1.0';

/** Absolute vacuum wavenumber of a laser line, cm⁻¹, from its wavelength in nm. */
export function laserWavenumber(laserNm: number): number {
	return 1e7 / laserNm;
}
