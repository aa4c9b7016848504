/**
 * The material library: common Raman bands for thermometry, with their room-temperature shifts,
 * line widths and, where published, a peak-shift model. Every number carries its source exactly
 * as physics.md §4 tags it: `[C: …]` confirmed in public material, `[M]` from memory (check the
 * original before relying on it), `[D]` derived there from confirmed inputs.
 *
 * Pure data and types: no framework imports, so the engine, the server and the browser share it.
 */
import { SILICON_BWH, type BalkanskiParameters } from './thermometry/peak-shift';

/** A value and where it comes from. */
export interface Sourced<T = number> {
	value: T;
	/** Standard uncertainty or half-range as the source states it, same unit as `value`. */
	uncertainty?: number;
	source: string;
}

export type PeakShiftInfo =
	| { kind: 'balkanski'; parameters: BalkanskiParameters; source: string; note: string }
	| { kind: 'linear'; slopeCm1PerK: Sourced<[number, number]>; note?: string };

export interface MaterialMode {
	/** Band name as spectroscopists write it, e.g. `F2g`, `E2(high)`. */
	name: string;
	/** Raman shift near room temperature, cm⁻¹. */
	shiftCm1: Sourced;
	/** FWHM near room temperature, cm⁻¹, where given. */
	fwhmCm1?: Sourced;
	peakShift?: PeakShiftInfo;
	/** Other published values for the same band, kept beside the one in use. */
	alsoReported?: { text: string; source: string }[];
}

export interface Material {
	label: string;
	/** The material's name without the band, for grouping. */
	material: string;
	/** The bands used for thermometry when a measurement names this key (first is the main one). */
	modes: MaterialMode[];
	/** Further bands of the material, listed for reference only. */
	otherBands?: { name: string; shiftCm1: Sourced }[];
	notes?: { text: string; source: string }[];
}

const PARKER_1967 = '[C: J. H. Parker, D. W. Feldman, M. Ashkin, Phys. Rev. 155, 712 (1967)]';
const M = '[M]';

export const MATERIALS = {
	silicon: {
		label: 'Silicon (c-Si), optical phonon',
		material: 'Crystalline silicon',
		modes: [
			{
				name: 'Γ optical phonon (F2g)',
				shiftCm1: { value: 520.7, source: `${M} modern calibration value (labs use 520.5–520.9)` },
				fwhmCm1: { value: 3, source: `${M} intrinsic FWHM at RT` },
				peakShift: {
					kind: 'balkanski',
					parameters: SILICON_BWH,
					source:
						'[C: Balkanski, Wallis & Haro, Phys. Rev. B 28, 1928 (1983)] citation; formula and parameters [M]',
					note: 'The model sits ≈1 cm⁻¹ above 520.7 at 300 K: use its shape, anchored to a reference measurement.'
				},
				alsoReported: [
					{
						text: '520.2 ± 0.5 cm⁻¹ at 300 K; FWHM 4.6 cm⁻¹ (1967 instrument)',
						source: PARKER_1967
					},
					{
						text: '521 cm⁻¹ at 20 °C, 493 cm⁻¹ at 900 °C; normalised slope −5.4×10⁻⁵ /°C',
						source: '[C: Tsu & Hernandez, APL 41, 1016 (1982)]'
					},
					{ text: 'near-RT slope ≈ −0.022 to −0.025 cm⁻¹/K', source: M }
				]
			}
		]
	},
	germanium: {
		label: 'Germanium, Γ phonon',
		material: 'Germanium',
		modes: [
			{
				name: 'Γ phonon',
				shiftCm1: { value: 300.7, uncertainty: 0.5, source: PARKER_1967 },
				fwhmCm1: { value: 5.3, source: `${PARKER_1967} (1967 instrument)` },
				peakShift: { kind: 'linear', slopeCm1PerK: { value: [-0.02, -0.015], source: M } }
			}
		]
	},
	diamond: {
		label: 'Diamond, F2g',
		material: 'Diamond',
		modes: [
			{
				name: 'F2g',
				shiftCm1: { value: 1332.5, source: `${M} room-temperature value` },
				peakShift: {
					kind: 'linear',
					slopeCm1PerK: { value: [-0.01, -0.01], source: `${M} near RT; ≈ −0.03 at 800–900 K` }
				},
				alsoReported: [
					{
						text: '1332.7 ± 0.2 cm⁻¹ and Γ(0) = 1.103 ± 0.03 cm⁻¹ extrapolated to 0 K; linewidth follows the Klemens (2-phonon) model',
						source:
							'[C: "Temperature dependence of the first-order Raman phonon line of diamond", Phys. Rev. B 61, 3391 (2000)]'
					}
				]
			}
		]
	},
	'sic-4h': {
		label: '4H-SiC, E2 (FTO)',
		material: '4H silicon carbide',
		modes: [{ name: 'E2 (FTO)', shiftCm1: { value: 776, source: M } }],
		otherBands: [
			{ name: 'E1(TO)', shiftCm1: { value: 797, source: M } },
			{ name: 'A1(LO)', shiftCm1: { value: 964, source: M } },
			{ name: 'E2 (FTA)', shiftCm1: { value: 204, source: M } }
		],
		notes: [
			{
				text: 'SiC bands at 964 cm⁻¹',
				source: '[C: Tiberj et al., Nanoscale Res. Lett. 6:478 (2011)]'
			},
			{
				text: 'E1 at 799 cm⁻¹ in (0001) due to stacking faults',
				source: '[C: Qin et al., J. Alloys Compd. 776, 1048 (2019)]'
			}
		]
	},
	'gan-e2h': {
		label: 'GaN (wurtzite), E2(high)',
		material: 'Gallium nitride (wurtzite)',
		modes: [
			{
				name: 'E2(high)',
				shiftCm1: { value: 567.6, source: `${M} ≈567–568 cm⁻¹, strain-sensitive` },
				peakShift: { kind: 'linear', slopeCm1PerK: { value: [-0.015, -0.015], source: M } }
			}
		],
		notes: [
			{
				text: 'Single-peak-shift thermometry under-predicts HEMT channel temperature (thermoelastic stress); combine E2(high) and A1(LO) or use the linewidth',
				source:
					'[C: "Thermometry of AlGaN/GaN HEMTs Using Multispectral Raman Features", IEEE TED (2013)]'
			}
		]
	},
	'gan-a1lo': {
		label: 'GaN (wurtzite), A1(LO)',
		material: 'Gallium nitride (wurtzite)',
		modes: [{ name: 'A1(LO)', shiftCm1: { value: 734, source: M } }]
	},
	'tio2-anatase': {
		label: 'Anatase TiO₂, Eg',
		material: 'Anatase TiO₂',
		modes: [{ name: 'Eg', shiftCm1: { value: 144, source: M } }],
		notes: [
			{
				text: 'Used for anti-Stokes/Stokes thermometry at 785/800/980 nm',
				source: '[C: Chemosensors 2024; Biosensors 11(4):102 (2021)]'
			}
		]
	},
	sapphire: {
		label: 'Sapphire α-Al₂O₃, A1g',
		material: 'Sapphire α-Al₂O₃',
		modes: [{ name: 'A1g (strongest)', shiftCm1: { value: 418, source: M } }],
		otherBands: [
			{ name: 'A1g', shiftCm1: { value: 645, source: M } },
			{ name: 'Eg', shiftCm1: { value: 378, source: M } },
			{ name: 'Eg', shiftCm1: { value: 430, source: M } },
			{ name: 'Eg', shiftCm1: { value: 451, source: M } },
			{ name: 'Eg', shiftCm1: { value: 578, source: M } },
			{ name: 'Eg', shiftCm1: { value: 751, source: M } }
		]
	}
} satisfies Record<string, Material>;

export type MaterialKey = keyof typeof MATERIALS;
export const MATERIAL_KEYS = Object.keys(MATERIALS) as [MaterialKey, ...MaterialKey[]];

/** The library as a list, for screens. */
export function builtInMaterials(): (Material & { key: MaterialKey })[] {
	return MATERIAL_KEYS.map((key) => ({ key, ...(MATERIALS[key] as Material) }));
}
