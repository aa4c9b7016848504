import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { toRamanShift } from '$lib/thermometry/axis';
import { laserWavenumber } from '$lib/thermometry/constants';
import { parseSpectrum } from '$lib/thermometry/parse';
import {
	lampCalibration,
	photonRadianceFromTable,
	radiancePhotonWavenumber,
	tableLampCalibration
} from '$lib/thermometry/planck';
import { responseFactor } from '$lib/thermometry/response';
import { EngineError, type Reading } from '$lib/thermometry/types';
import { LASER_MATCH_NM } from '$lib/instrument-flags';
import { recordAudit } from './audit';
import { db } from './db';
import {
	calibrations,
	instrumentProfileVersions,
	measurements,
	readings,
	type CalibrationInputs
} from './db/schema';
import { InstrumentError, profileWithNewestVersion } from './instruments';

/**
 * Response calibrations of an instrument profile. The numbers come from the engine
 * (response.ts); this module only checks the inputs, stores the result and audits the change.
 */

export type Calibration = typeof calibrations.$inferSelect;

const number = (what: string, unit: string) =>
	z
		.string()
		.trim()
		.min(1, `Enter the ${what} (${unit}).`)
		.transform(Number)
		.pipe(z.number({ error: `The ${what} must be a number (${unit}).` }).finite());

const positive = (what: string, unit: string) =>
	number(what, unit).pipe(z.number().gt(0, `The ${what} must be above zero.`));
const nonNegative = (what: string, unit: string) =>
	number(what, unit).pipe(z.number().min(0, `The ${what} cannot be negative.`));

/** A date from `<input type="date">`, or empty for "now" / "no end". */
const date = z
	.string()
	.trim()
	.default('')
	.refine((s) => s === '' || !Number.isNaN(Date.parse(s)), 'Enter a date such as 2026-12-31.')
	.transform((s) => (s === '' ? null : new Date(s)));

const validity = {
	valid_from: date,
	valid_until: date,
	notes: z.string().trim().max(2000, 'At most 2000 characters.').default('')
};

function checkValidity(
	v: { valid_from: Date | null; valid_until: Date | null },
	ctx: z.RefinementCtx
) {
	if (v.valid_until && v.valid_until <= (v.valid_from ?? new Date()))
		ctx.addIssue({
			code: 'custom',
			path: ['valid_until'],
			message: 'The end of validity must come after its start.'
		});
}

/** A field that may be left empty, when another choice on the form makes it unnecessary. */
const optional = <T extends z.ZodType<unknown, string>>(inner: T) =>
	z
		.string()
		.trim()
		.default('')
		.transform((s) => (s === '' ? undefined : s))
		.pipe(inner.optional());

export const constantForm = z
	.object({
		c: positive('response ratio C', 'anti-Stokes over Stokes'),
		u_c: nonNegative('uncertainty u(C)', 'same units as C'),
		source: z
			.string()
			.trim()
			.min(1, 'Say where this C comes from, e.g. a vendor certificate.')
			.max(300, 'At most 300 characters.'),
		...validity
	})
	.superRefine(checkValidity);
export type ConstantInput = z.infer<typeof constantForm>;

export const referenceForm = z
	.object({
		/** A measurement of the project whose newest reading gives R₀, u(R₀) and the band. */
		measurement: z
			.string()
			.trim()
			.default('')
			.transform((s) => (s === '' ? undefined : s))
			.pipe(z.uuid('Paste the id of a measurement of this project.').optional()),
		ratio: optional(positive('reference ratio R₀', 'fitted anti-Stokes/Stokes area ratio')),
		u_ratio: optional(nonNegative('uncertainty u(R₀)', 'same units as R₀')),
		t0_k: positive('reference temperature T₀', 'K'),
		u_t0_k: nonNegative('uncertainty u(T₀)', 'K'),
		mode_cm1: optional(
			positive('band shift', 'cm⁻¹').pipe(
				z.number().max(5000, 'A Raman shift of at most 5000 cm⁻¹.')
			)
		),
		...validity
	})
	.superRefine((v, ctx) => {
		if (v.measurement === undefined) {
			for (const [key, what] of [
				['ratio', 'reference ratio R₀'],
				['u_ratio', 'uncertainty u(R₀)'],
				['mode_cm1', 'band shift']
			] as const)
				if (v[key] === undefined)
					ctx.addIssue({
						code: 'custom',
						path: [key],
						message: `Enter the ${what}, or give the reference measurement instead.`
					});
		}
		checkValidity(v, ctx);
	});
export type ReferenceInput = z.infer<typeof referenceForm>;

export const lampForm = z
	.object({
		/** What the lamp's spectral radiance is known from. */
		reference: z
			.enum(
				['colour-temperature', 'certified-table'],
				'Choose what the lamp’s radiance is known from.'
			)
			.default('colour-temperature'),
		colour_temperature_k: optional(
			positive('colour temperature', 'K').pipe(
				z
					.number()
					.min(1000, 'A lamp between 1000 and 4000 K.')
					.max(4000, 'A lamp between 1000 and 4000 K.')
			)
		),
		u_colour_temperature_k: optional(nonNegative('uncertainty u(T_c)', 'K')),
		u_table_percent: optional(
			nonNegative('relative uncertainty of the certified radiance', '%').pipe(
				z.number().max(50, 'At most 50 %.')
			)
		),
		u_percent: nonNegative('relative uncertainty of the response', '%').pipe(
			z.number().max(50, 'At most 50 %.')
		),
		mode_cm1: positive('band shift', 'cm⁻¹').pipe(
			z.number().max(5000, 'A Raman shift of at most 5000 cm⁻¹.')
		),
		axis: z.enum(['raman-shift', 'wavelength'], 'Choose the unit of the file’s first column.'),
		...validity
	})
	.superRefine((v, ctx) => {
		const need = (path: string, message: string) =>
			ctx.addIssue({ code: 'custom', path: [path], message });
		if (v.reference === 'colour-temperature') {
			if (v.colour_temperature_k === undefined)
				need('colour_temperature_k', 'Enter the colour temperature (K), or use a certified table.');
			if (v.u_colour_temperature_k === undefined)
				need('u_colour_temperature_k', 'Enter the uncertainty u(T_c) (K).');
		} else if (v.u_table_percent === undefined) {
			need('u_table_percent', 'Enter the certificate’s relative uncertainty (%).');
		}
		checkValidity(v, ctx);
	});
export type LampInput = z.infer<typeof lampForm>;

export const curveForm = z
	.object({
		u_percent: nonNegative('relative uncertainty of the response', '%').pipe(
			z.number().max(50, 'At most 50 %.')
		),
		mode_cm1: positive('band shift', 'cm⁻¹').pipe(
			z.number().max(5000, 'A Raman shift of at most 5000 cm⁻¹.')
		),
		...validity
	})
	.superRefine(checkValidity);
export type CurveInput = z.infer<typeof curveForm>;

/** The largest lamp or response file accepted, bytes. */
export const MAX_LAMP_BYTES = 5 * 1024 * 1024;

/** The profile with its newest version, inside the caller's transaction; 404 when absent. */
async function lockProfile(tx: Pick<typeof db, 'select'>, projectId: number, profileId: number) {
	const row = await profileWithNewestVersion(tx, projectId, profileId);
	if (!row) throw new InstrumentError('profile', 'No such profile in this project.', 404);
	return row;
}

export async function listCalibrations(profileId: number): Promise<Calibration[]> {
	return db
		.select()
		.from(calibrations)
		.where(eq(calibrations.profileId, profileId))
		.orderBy(desc(calibrations.createdAt), desc(calibrations.id));
}

async function insertCalibration(
	projectId: number,
	profileId: number,
	userId: string,
	make: (version: typeof instrumentProfileVersions.$inferSelect) => {
		c: number;
		uC: number;
		inputs: CalibrationInputs;
	},
	input: { valid_from: Date | null; valid_until: Date | null; notes: string },
	/** The form field an engine refusal belongs beside. */
	refusedField: string
) {
	return db.transaction(async (tx) => {
		const { version } = await lockProfile(tx, projectId, profileId);
		let made: ReturnType<typeof make>;
		try {
			made = make(version);
		} catch (err) {
			if (err instanceof EngineError) throw new InstrumentError(refusedField, err.message, 400);
			throw err;
		}
		const [row] = await tx
			.insert(calibrations)
			.values({
				profileId,
				profileVersionId: version.id,
				method: made.inputs.method,
				c: made.c,
				uC: made.uC,
				inputs: made.inputs,
				validFrom: input.valid_from ?? new Date(),
				validUntil: input.valid_until,
				notes: input.notes,
				createdBy: userId
			})
			.returning();
		await recordAudit(tx, {
			projectId,
			actor: { userId },
			action: 'calibration.create',
			objectType: 'calibration',
			objectId: row.id,
			after: row
		});
		return row;
	});
}

export function createConstantCalibration(
	projectId: number,
	profileId: number,
	input: ConstantInput,
	userId: string
) {
	return insertCalibration(
		projectId,
		profileId,
		userId,
		() => {
			// Through the engine, so a constant is checked exactly as the analysis will check it.
			const f = responseFactor({ kind: 'constant', c: input.c, u_c: input.u_c }, 1, 0, 3);
			return { c: f.c, uC: f.u_c, inputs: { method: 'constant', source: input.source } };
		},
		input,
		'c'
	);
}

/**
 * A pair measured at a known T₀ fixes C = R₀ρ⁻ⁿe^(c₂ν̃m/T₀) for the profile's laser and
 * exponent, with u(C) from u(R₀) and u(T₀) (physics.md §1.3a, §2.1).
 */
export async function createReferenceCalibration(
	projectId: number,
	profileId: number,
	input: ReferenceInput,
	userId: string
) {
	const pair = input.measurement
		? await referencePair(projectId, input.measurement)
		: { ratio: input.ratio!, uRatio: input.u_ratio!, modeCm1: input.mode_cm1!, laserNm: null };
	return insertCalibration(
		projectId,
		profileId,
		userId,
		(version) => {
			if (pair.laserNm !== null && Math.abs(pair.laserNm - version.laserNm) > LASER_MATCH_NM)
				throw new InstrumentError(
					'measurement',
					`The reference pair was taken at ${pair.laserNm} nm, the profile's laser is ${version.laserNm} nm.`,
					400
				);
			const exponent = version.detector === 'energy' ? 4 : 3;
			const f = responseFactor(
				{
					kind: 'reference',
					ratio: pair.ratio,
					u_ratio: pair.uRatio,
					t0_k: input.t0_k,
					u_t0_k: input.u_t0_k
				},
				laserWavenumber(version.laserNm),
				pair.modeCm1,
				exponent
			);
			return {
				c: f.c,
				uC: f.u_c,
				inputs: {
					method: 'reference-run',
					ratio: pair.ratio,
					uRatio: pair.uRatio,
					t0K: input.t0_k,
					uT0K: input.u_t0_k,
					modeCm1: pair.modeCm1,
					laserNm: version.laserNm,
					exponent,
					...('measurementId' in pair
						? { measurementId: pair.measurementId, readingId: pair.readingId }
						: {})
				}
			};
		},
		input,
		input.measurement ? 'measurement' : 'mode_cm1'
	);
}

/**
 * R₀ ± u(R₀) and the band from the newest reading of a measurement of the project: the fitted
 * anti-Stokes/Stokes area ratio of its first mode, which does not depend on the C it was
 * analysed with (the fit moves T, not the ratio).
 */
async function referencePair(projectId: number, measurementId: string) {
	const refuse = (message: string) => new InstrumentError('measurement', message, 400);
	const [row] = await db
		.select({ reading: readings, label: measurements.label })
		.from(measurements)
		.innerJoin(readings, eq(readings.measurementId, measurements.id))
		.where(and(eq(measurements.id, measurementId), eq(measurements.projectId, projectId)))
		.orderBy(desc(readings.createdAt))
		.limit(1);
	if (!row) throw refuse('This project has no analysed measurement with that id.');
	const result = row.reading.result as unknown as Reading;
	const mode = result.modes[0];
	const ratio =
		result.budget.find((b) => b.input === 'ratio') ??
		result.budget.find((b) => b.input === `ratio@${mode?.mode_cm1}`);
	if (!mode || !ratio || row.reading.temperatureK === null)
		throw refuse('That measurement’s reading has no fitted ratio (it carries an error flag).');
	return {
		ratio: ratio.value,
		uRatio: ratio.standard_uncertainty,
		modeCm1: mode.mode_cm1,
		laserNm: result.laser_nm,
		measurementId,
		readingId: row.reading.id
	};
}

/** At most this many points of a calibration's data are kept for its plot. */
const PLOT_POINTS = 600;

function thin(n: number): number[] {
	const step = Math.max(1, Math.ceil(n / PLOT_POINTS));
	const out: number[] = [];
	for (let i = 0; i < n; i += step) out.push(i);
	if (out[out.length - 1] !== n - 1) out.push(n - 1);
	return out;
}

/**
 * A lamp spectrum seen through the profile's optics gives the relative response via Planck's
 * law in photon units (physics.md §1.3b), from the lamp's colour temperature or from its
 * certified spectral radiance table; C is read at the band.
 */
export function createLampCalibration(
	projectId: number,
	profileId: number,
	input: LampInput,
	lamp: { name: string; text: string },
	userId: string,
	/** The certificate's table (wavelength nm, energy radiance per wavelength), when used. */
	table?: { name: string; text: string }
) {
	return insertCalibration(
		projectId,
		profileId,
		userId,
		(version) => {
			const parsed = parseSpectrum(lamp);
			const spectrum = {
				shift: toRamanShift(parsed.x, input.axis, version.laserNm),
				counts: parsed.y
			};
			let certified: { wavelengthNm: number[]; radiance: number[] } | undefined;
			if (input.reference === 'certified-table') {
				if (!table)
					throw new InstrumentError('radiance', 'Choose the certified radiance table.', 400);
				let rows;
				try {
					rows = parseSpectrum(table, { minPoints: 2 });
				} catch (err) {
					if (err instanceof EngineError) throw new InstrumentError('radiance', err.message, 400);
					throw err;
				}
				certified = { wavelengthNm: Array.from(rows.x), radiance: Array.from(rows.y) };
			}
			const common = {
				lamp: spectrum,
				laserNm: version.laserNm,
				modeCm1: input.mode_cm1,
				uRelative: input.u_percent / 100
			};
			const cal = certified
				? tableLampCalibration({
						...common,
						table: certified,
						uTableRelative: (input.u_table_percent ?? 0) / 100
					})
				: lampCalibration({
						...common,
						colourTemperatureK: input.colour_temperature_k!,
						uColourTemperatureK: input.u_colour_temperature_k!
					});
			// What the plot shows: the counts, the photons the lamp sends into each pixel, and
			// their quotient, the response (each scaled to a largest value of 1).
			const nuL = laserWavenumber(version.laserNm);
			const radiance = certified
				? photonRadianceFromTable(certified)
				: (nu: number) => radiancePhotonWavenumber(nu, input.colour_temperature_k!);
			const keep = thin(cal.curve.shift.length);
			const expected = keep.map((i) => {
				const n = cal.curve.shift.length;
				const sh = cal.curve.shift;
				const width =
					(sh[Math.min(i + 1, n - 1)] - sh[Math.max(i - 1, 0)]) / (i === 0 || i === n - 1 ? 1 : 2);
				return radiance((nuL - sh[i]) * 100) * width;
			});
			const counts = keep.map((i) => spectrum.counts[i]);
			const scale = (xs: number[]) => {
				const top = Math.max(...xs);
				return xs.map((x) => x / top);
			};
			return {
				c: cal.c,
				uC: cal.u_c,
				inputs: {
					method: 'lamp',
					laserNm: version.laserNm,
					colourTemperatureK: certified ? null : input.colour_temperature_k!,
					uColourTemperatureK: certified ? null : input.u_colour_temperature_k!,
					radianceTable: certified
						? {
								file: table!.name,
								points: certified.wavelengthNm.length,
								uRelative: (input.u_table_percent ?? 0) / 100,
								rangeNm: [
									certified.wavelengthNm[0],
									certified.wavelengthNm[certified.wavelengthNm.length - 1]
								]
							}
						: undefined,
					modeCm1: input.mode_cm1,
					uRelative: input.u_percent / 100,
					file: lamp.name,
					points: parsed.x.length,
					budget: cal.budget,
					plot: {
						shift: keep.map((i) => cal.curve.shift[i]),
						counts: scale(counts),
						expected: scale(expected),
						response: keep.map((i) => cal.curve.response[i])
					}
				}
			};
		},
		input,
		'lamp'
	);
}

/**
 * A measured relative response R(shift) (both signs, e.g. from a vendor or a luminescent
 * standard characterised on both sides): C = R(−ν̃m)/R(+ν̃m), interpolated by the engine.
 */
export function createCurveCalibration(
	projectId: number,
	profileId: number,
	input: CurveInput,
	file: { name: string; text: string },
	userId: string
) {
	return insertCalibration(
		projectId,
		profileId,
		userId,
		(version) => {
			const parsed = parseSpectrum(file, { minPoints: 2 });
			const f = responseFactor(
				{
					kind: 'curve',
					shift: Array.from(parsed.x),
					response: Array.from(parsed.y),
					u_relative: input.u_percent / 100
				},
				laserWavenumber(version.laserNm),
				input.mode_cm1,
				version.detector === 'energy' ? 4 : 3
			);
			const keep = thin(parsed.x.length);
			return {
				c: f.c,
				uC: f.u_c,
				inputs: {
					method: 'response-curve',
					uRelative: input.u_percent / 100,
					points: parsed.x.length,
					modeCm1: input.mode_cm1,
					file: file.name,
					plot: { shift: keep.map((i) => parsed.x[i]), response: keep.map((i) => parsed.y[i]) }
				}
			};
		},
		input,
		'curve'
	);
}

/** Retire a calibration: it stays listed (readings may name it) but is no longer offered. */
export async function retireCalibration(
	projectId: number,
	profileId: number,
	calibrationId: number,
	userId: string
) {
	return db.transaction(async (tx) => {
		await lockProfile(tx, projectId, profileId);
		const [before] = await tx
			.select()
			.from(calibrations)
			.where(and(eq(calibrations.id, calibrationId), eq(calibrations.profileId, profileId)))
			.for('update');
		if (!before) throw new InstrumentError('calibration', 'No such calibration.', 404);
		if (before.status === 'retired') return before;
		const [after] = await tx
			.update(calibrations)
			.set({ status: 'retired' })
			.where(eq(calibrations.id, calibrationId))
			.returning();
		await recordAudit(tx, {
			projectId,
			actor: { userId },
			action: 'calibration.retire',
			objectType: 'calibration',
			objectId: calibrationId,
			before,
			after
		});
		return after;
	});
}
