import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { toRamanShift } from '$lib/thermometry/axis';
import { laserWavenumber } from '$lib/thermometry/constants';
import { parseSpectrum } from '$lib/thermometry/parse';
import { lampCalibration } from '$lib/thermometry/planck';
import { responseFactor } from '$lib/thermometry/response';
import { EngineError } from '$lib/thermometry/types';
import { recordAudit } from './audit';
import { db } from './db';
import {
	calibrations,
	instrumentProfiles,
	instrumentProfileVersions,
	type CalibrationInputs
} from './db/schema';
import { InstrumentError } from './instruments';

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
		ratio: positive('reference ratio R₀', 'fitted anti-Stokes/Stokes area ratio'),
		u_ratio: nonNegative('uncertainty u(R₀)', 'same units as R₀'),
		t0_k: positive('reference temperature T₀', 'K'),
		u_t0_k: nonNegative('uncertainty u(T₀)', 'K'),
		mode_cm1: positive('band shift', 'cm⁻¹').pipe(
			z.number().max(5000, 'A Raman shift of at most 5000 cm⁻¹.')
		),
		...validity
	})
	.superRefine(checkValidity);
export type ReferenceInput = z.infer<typeof referenceForm>;

export const lampForm = z
	.object({
		colour_temperature_k: positive('colour temperature', 'K').pipe(
			z
				.number()
				.min(1000, 'A lamp between 1000 and 4000 K.')
				.max(4000, 'A lamp between 1000 and 4000 K.')
		),
		u_colour_temperature_k: nonNegative('uncertainty u(T_c)', 'K'),
		u_percent: nonNegative('relative uncertainty of the response', '%').pipe(
			z.number().max(50, 'At most 50 %.')
		),
		mode_cm1: positive('band shift', 'cm⁻¹').pipe(
			z.number().max(5000, 'A Raman shift of at most 5000 cm⁻¹.')
		),
		axis: z.enum(['raman-shift', 'wavelength'], 'Choose the unit of the file’s first column.'),
		...validity
	})
	.superRefine(checkValidity);
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
	const [row] = await tx
		.select({ profile: instrumentProfiles, version: instrumentProfileVersions })
		.from(instrumentProfiles)
		.innerJoin(
			instrumentProfileVersions,
			eq(instrumentProfileVersions.profileId, instrumentProfiles.id)
		)
		.where(and(eq(instrumentProfiles.projectId, projectId), eq(instrumentProfiles.id, profileId)))
		.orderBy(desc(instrumentProfileVersions.version))
		.limit(1);
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
export function createReferenceCalibration(
	projectId: number,
	profileId: number,
	input: ReferenceInput,
	userId: string
) {
	return insertCalibration(
		projectId,
		profileId,
		userId,
		(version) => {
			const exponent = version.detector === 'energy' ? 4 : 3;
			const f = responseFactor(
				{
					kind: 'reference',
					ratio: input.ratio,
					u_ratio: input.u_ratio,
					t0_k: input.t0_k,
					u_t0_k: input.u_t0_k
				},
				laserWavenumber(version.laserNm),
				input.mode_cm1,
				exponent
			);
			return {
				c: f.c,
				uC: f.u_c,
				inputs: {
					method: 'reference-run',
					ratio: input.ratio,
					uRatio: input.u_ratio,
					t0K: input.t0_k,
					uT0K: input.u_t0_k,
					modeCm1: input.mode_cm1,
					laserNm: version.laserNm,
					exponent
				}
			};
		},
		input,
		'mode_cm1'
	);
}

/**
 * A lamp spectrum seen through the profile's optics, with the lamp's colour temperature, gives
 * the relative response via Planck's law in photon units, and C at the band (physics.md §1.3b).
 */
export function createLampCalibration(
	projectId: number,
	profileId: number,
	input: LampInput,
	lamp: { name: string; text: string },
	userId: string
) {
	return insertCalibration(
		projectId,
		profileId,
		userId,
		(version) => {
			const parsed = parseSpectrum(lamp);
			const cal = lampCalibration({
				lamp: { shift: toRamanShift(parsed.x, input.axis, version.laserNm), counts: parsed.y },
				laserNm: version.laserNm,
				colourTemperatureK: input.colour_temperature_k,
				uColourTemperatureK: input.u_colour_temperature_k,
				modeCm1: input.mode_cm1,
				uRelative: input.u_percent / 100
			});
			return {
				c: cal.c,
				uC: cal.u_c,
				inputs: {
					method: 'lamp',
					laserNm: version.laserNm,
					colourTemperatureK: input.colour_temperature_k,
					uColourTemperatureK: input.u_colour_temperature_k,
					modeCm1: input.mode_cm1,
					uRelative: input.u_percent / 100,
					file: lamp.name,
					points: parsed.x.length,
					budget: cal.budget
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
			return {
				c: f.c,
				uC: f.u_c,
				inputs: {
					method: 'response-curve',
					uRelative: input.u_percent / 100,
					points: parsed.x.length,
					modeCm1: input.mode_cm1,
					file: file.name
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
