import {
	doublePrecision,
	index,
	integer,
	jsonb,
	pgTable,
	text,
	timestamp
} from 'drizzle-orm/pg-core';
import { users } from './auth';
import { timestamps } from './columns';
import { instrumentProfiles, instrumentProfileVersions } from './instruments';

/** What a calibration was made from, kept so its C can be recomputed and its budget shown. */
export type CalibrationInputs =
	| { method: 'constant'; source: string }
	| {
			method: 'reference-run';
			/** Fitted anti-Stokes/Stokes area ratio R₀ of the reference pair, with its u. */
			ratio: number;
			uRatio: number;
			/** Stage or thermocouple temperature T₀ and its u, K. */
			t0K: number;
			uT0K: number;
			/** The band the pair was measured on, cm⁻¹: C holds for this band only. */
			modeCm1: number;
			laserNm: number;
			exponent: 3 | 4;
			/** The reference pair in this project, when R₀ was taken from its reading. */
			measurementId?: string;
			readingId?: string;
	  }
	| {
			method: 'response-curve';
			uRelative: number;
			points: number;
			modeCm1: number;
			file: string;
			/** The curve, thinned for its plot. */
			plot?: { shift: number[]; response: number[] };
	  }
	| {
			method: 'lamp';
			laserNm: number;
			/** The colour temperature and its u, K; null when a certified radiance table was used. */
			colourTemperatureK: number | null;
			uColourTemperatureK: number | null;
			radianceTable?: { file: string; points: number; uRelative: number; rangeNm: number[] };
			/** The band C was read at, cm⁻¹, and the lamp file it was read from. */
			modeCm1: number;
			uRelative: number;
			file: string;
			points: number;
			/** Contributions to u(C): the curve's scatter, and u(T_c) or the table's u. */
			budget: { curve: number; colourTemperature?: number; radianceTable?: number };
			/** Lamp counts, expected photons per pixel and response, each scaled to 1, thinned. */
			plot?: { shift: number[]; counts: number[]; expected: number[]; response: number[] };
	  };

export const CALIBRATION_METHODS = ['constant', 'reference-run', 'response-curve', 'lamp'] as const;

/** A response calibration of an instrument profile: the ratio C ± u and how it was obtained. */
export const calibrations = pgTable(
	'calibrations',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		profileId: integer()
			.notNull()
			.references(() => instrumentProfiles.id, { onDelete: 'cascade' }),
		/** The profile version it was made with (its laser and detector), when known. */
		profileVersionId: integer().references(() => instrumentProfileVersions.id, {
			onDelete: 'set null'
		}),
		method: text({ enum: CALIBRATION_METHODS }).notNull(),
		c: doublePrecision().notNull(),
		uC: doublePrecision().notNull(),
		inputs: jsonb().$type<CalibrationInputs>().notNull(),
		validFrom: timestamp({ withTimezone: true }).notNull().defaultNow(),
		/** After this the calibration still applies but readings carry a warning; null: no end. */
		validUntil: timestamp({ withTimezone: true }),
		status: text({ enum: ['active', 'retired'] })
			.notNull()
			.default('active'),
		notes: text().notNull().default(''),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		...timestamps
	},
	(t) => [index().on(t.profileId, t.status)]
);
