import { sql } from 'drizzle-orm';
import {
	bigint,
	doublePrecision,
	index,
	integer,
	jsonb,
	pgEnum,
	pgTable,
	text,
	timestamp,
	uniqueIndex,
	uuid
} from 'drizzle-orm/pg-core';
import type { MeasurementMetadata } from '$lib/measurement-metadata';
import { users } from './auth';
import { timestamps } from './columns';
import { calibrations } from './calibrations';
import { instrumentProfileVersions } from './instruments';
import { acquisitionTokens, projects } from './projects';

export const analysisStatus = pgEnum('analysis_status', ['queued', 'analysing', 'done', 'failed']);
export const filePart = pgEnum('file_part', ['stokes', 'anti_stokes', 'combined', 'dark']);

/** One acquisition: its files (in object storage) and what was said about it. */
export const measurements = pgTable(
	'measurements',
	{
		id: uuid().primaryKey().defaultRandom(),
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		/** The status of the newest analysis, kept here for filtering and the table. */
		status: analysisStatus().notNull().default('queued'),
		metadata: jsonb().$type<MeasurementMetadata>().notNull(),
		label: text(),
		batch: text(),
		series: text(),
		x: doublePrecision(),
		y: doublePrecision(),
		laserPowerMw: doublePrecision(),
		acquiredAt: timestamp({ withTimezone: true }),
		uploadedBy: text().references(() => users.id, { onDelete: 'set null' }),
		uploadedByToken: integer().references(() => acquisitionTokens.id, { onDelete: 'set null' }),
		/** A client's Idempotency-Key, unique per project, and a hash of what it sent with it. */
		idempotencyKey: text(),
		requestHash: text(),
		...timestamps
	},
	(t) => [
		index().on(t.projectId, t.createdAt),
		index().on(t.projectId, t.series),
		index().on(t.projectId, t.batch),
		uniqueIndex()
			.on(t.projectId, t.idempotencyKey)
			.where(sql`${t.idempotencyKey} is not null`)
	]
);

export const measurementFiles = pgTable(
	'measurement_files',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		measurementId: uuid()
			.notNull()
			.references(() => measurements.id, { onDelete: 'cascade' }),
		part: filePart().notNull(),
		objectKey: text().notNull(),
		fileName: text().notNull(),
		contentType: text().notNull(),
		bytes: bigint({ mode: 'number' }).notNull(),
		sha256: text().notNull(),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.measurementId, t.part)]
);

/** A request to analyse a measurement with given settings; each successful one makes a reading. */
export const analyses = pgTable(
	'analyses',
	{
		id: uuid().primaryKey().defaultRandom(),
		measurementId: uuid()
			.notNull()
			.references(() => measurements.id, { onDelete: 'cascade' }),
		/** The full metadata the engine ran with (the upload's, with any re-analysis changes). */
		settings: jsonb().$type<MeasurementMetadata>().notNull(),
		/**
		 * The instrument profile version and response calibration the settings were taken from, when
		 * the measurement named a profile. No delete action: a reading never loses what it used
		 * (a whole project's deletion still cascades, checked at the end of the statement).
		 */
		profileVersionId: integer().references(() => instrumentProfileVersions.id),
		calibrationId: integer().references(() => calibrations.id),
		status: analysisStatus().notNull().default('queued'),
		failure: jsonb().$type<{ code: string; message: string }>(),
		attempts: integer().notNull().default(0),
		requestedBy: text().references(() => users.id, { onDelete: 'set null' }),
		requestedByToken: integer().references(() => acquisitionTokens.id, { onDelete: 'set null' }),
		startedAt: timestamp({ withTimezone: true }),
		finishedAt: timestamp({ withTimezone: true }),
		...timestamps
	},
	(t) => [index().on(t.measurementId, t.createdAt), index().on(t.status)]
);

/** The temperature inferred from a measurement. Readings are never changed, only added. */
export const readings = pgTable(
	'readings',
	{
		id: uuid().primaryKey().defaultRandom(),
		measurementId: uuid()
			.notNull()
			.references(() => measurements.id, { onDelete: 'cascade' }),
		/** One analysis makes at most one reading, however often its job runs. */
		analysisId: uuid()
			.notNull()
			.references(() => analyses.id, { onDelete: 'cascade' }),
		temperatureK: doublePrecision(),
		uTemperatureK: doublePrecision(),
		expandedUncertaintyK: doublePrecision(),
		coverageFactor: doublePrecision().notNull(),
		/** The most severe flag: none, info, warning or error. */
		worstSeverity: text({ enum: ['none', 'info', 'warning', 'error'] }).notNull(),
		flagCodes: text().array().notNull(),
		engineVersion: text().notNull(),
		/** The engine's JSON output, field names unchanged. */
		result: jsonb().$type<Record<string, unknown>>().notNull(),
		/** Prepared windows for the plots: shift, rate and usable mask per side. */
		spectra: jsonb().$type<ReadingSpectra>().notNull(),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.analysisId), index().on(t.measurementId, t.createdAt)]
);

export interface WindowForPlot {
	shift: number[];
	rate: number[];
	usable: number[];
	/** A subtracted fluorescence baseline (counts/s), when one was. */
	baseline?: number[];
}
export interface ReadingSpectra {
	stokes: WindowForPlot;
	anti_stokes: WindowForPlot;
}

/** Per-token request counts per minute, shared by every app process through the database. */
export const tokenRequestCounts = pgTable(
	'token_request_counts',
	{
		tokenId: integer()
			.notNull()
			.references(() => acquisitionTokens.id, { onDelete: 'cascade' }),
		windowStart: timestamp({ withTimezone: true }).notNull(),
		count: integer().notNull().default(0)
	},
	(t) => [uniqueIndex().on(t.tokenId, t.windowStart)]
);
