import { and, asc, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { MATERIAL_KEYS } from '$lib/materials';
import type { MeasurementRequest } from '$lib/measurement-metadata';
import { recordAudit } from './audit';
import { db } from './db';
import { problem } from './problem';
import {
	instrumentProfiles,
	instrumentProfileVersions,
	materials,
	type ProjectMaterialMode
} from './db/schema';

/**
 * Instrument profiles and a project's own materials. A profile is a name; what it says lives in
 * versions that are only ever added, so an edit never rewrites what an earlier analysis used.
 */

export type ProfileVersion = typeof instrumentProfileVersions.$inferSelect;
export type ProjectMaterial = typeof materials.$inferSelect;

const number = (what: string, unit: string) =>
	z
		.string()
		.trim()
		.min(1, `Enter the ${what} (${unit}).`)
		.transform(Number)
		.pipe(z.number({ error: `The ${what} must be a number (${unit}).` }).finite());

export const profileForm = z.object({
	name: z.string().trim().min(1, 'Give the profile a name.').max(100, 'At most 100 characters.'),
	laser_nm: number('laser wavelength', 'nm').pipe(
		z
			.number()
			.min(200, 'Raman lasers lie between 200 and 2000 nm.')
			.max(2000, 'Raman lasers lie between 200 and 2000 nm.')
	),
	detector: z.enum(['photon-counting', 'energy'], 'Choose how the detector counts.'),
	filter_cutoff_cm1: number('filter cut-off', 'cm⁻¹').pipe(
		z
			.number()
			.min(0, 'The cut-off is a shift magnitude, zero or more.')
			.max(3000, 'At most 3000 cm⁻¹.')
	),
	optics_notes: z.string().trim().max(2000, 'At most 2000 characters.').default(''),
	notes: z.string().trim().max(4000, 'At most 4000 characters.').default('')
});
export type ProfileInput = z.infer<typeof profileForm>;

export class InstrumentError extends Error {
	constructor(
		readonly field: string,
		message: string,
		readonly status = 409
	) {
		super(message);
	}
}

function isUniqueViolation(err: unknown): boolean {
	const e = err as { code?: string; cause?: { code?: string } };
	return e?.code === '23505' || e?.cause?.code === '23505';
}

function versionValues(input: ProfileInput) {
	return {
		laserNm: input.laser_nm,
		detector: input.detector,
		filterCutoffCm1: input.filter_cutoff_cm1,
		opticsNotes: input.optics_notes,
		notes: input.notes
	};
}

export async function listProfiles(projectId: number) {
	const profiles = await db
		.select()
		.from(instrumentProfiles)
		.where(eq(instrumentProfiles.projectId, projectId))
		.orderBy(asc(instrumentProfiles.name));
	const versions = await db
		.select({ version: instrumentProfileVersions })
		.from(instrumentProfileVersions)
		.innerJoin(instrumentProfiles, eq(instrumentProfiles.id, instrumentProfileVersions.profileId))
		.where(eq(instrumentProfiles.projectId, projectId))
		.orderBy(desc(instrumentProfileVersions.version));
	return profiles.map((p) => {
		const mine = versions.map((v) => v.version).filter((v) => v.profileId === p.id);
		return { ...p, latest: mine[0], versionCount: mine.length };
	});
}

/** A profile of the project, by id or name, with its newest version; null when it is not there. */
export async function profileWithNewestVersion(
	executor: Pick<typeof db, 'select'>,
	projectId: number,
	ref: number | string
) {
	const [row] = await executor
		.select({ profile: instrumentProfiles, version: instrumentProfileVersions })
		.from(instrumentProfiles)
		.innerJoin(
			instrumentProfileVersions,
			eq(instrumentProfileVersions.profileId, instrumentProfiles.id)
		)
		.where(
			and(
				eq(instrumentProfiles.projectId, projectId),
				typeof ref === 'number' ? eq(instrumentProfiles.id, ref) : eq(instrumentProfiles.name, ref)
			)
		)
		.orderBy(desc(instrumentProfileVersions.version))
		.limit(1);
	return row ?? null;
}

/** A profile of the project with all its versions, newest first; null when it is not there. */
export async function profileOf(projectId: number, profileId: number) {
	const [profile] = await db
		.select()
		.from(instrumentProfiles)
		.where(and(eq(instrumentProfiles.projectId, projectId), eq(instrumentProfiles.id, profileId)));
	if (!profile) return null;
	const versions = await db
		.select()
		.from(instrumentProfileVersions)
		.where(eq(instrumentProfileVersions.profileId, profileId))
		.orderBy(desc(instrumentProfileVersions.version));
	return { profile, versions };
}

export async function createProfile(projectId: number, input: ProfileInput, userId: string) {
	try {
		return await db.transaction(async (tx) => {
			const [profile] = await tx
				.insert(instrumentProfiles)
				.values({ projectId, name: input.name, createdBy: userId })
				.returning();
			const [version] = await tx
				.insert(instrumentProfileVersions)
				.values({ profileId: profile.id, version: 1, createdBy: userId, ...versionValues(input) })
				.returning();
			await recordAudit(tx, {
				projectId,
				actor: { userId },
				action: 'instrument.create',
				objectType: 'instrument_profile',
				objectId: profile.id,
				after: version
			});
			return { profile, version };
		});
	} catch (err) {
		if (isUniqueViolation(err))
			throw new InstrumentError('name', 'This project already has a profile of that name.');
		throw err;
	}
}

/** An edit: the next version, numbered after the newest (the unique index catches a race). */
export async function editProfile(
	projectId: number,
	profileId: number,
	input: ProfileInput,
	userId: string
) {
	try {
		return await db.transaction(async (tx) => {
			const [profile] = await tx
				.select()
				.from(instrumentProfiles)
				.where(
					and(eq(instrumentProfiles.projectId, projectId), eq(instrumentProfiles.id, profileId))
				)
				.for('update');
			if (!profile) throw new InstrumentError('profile', 'No such profile in this project.', 404);
			const [newest] = await tx
				.select()
				.from(instrumentProfileVersions)
				.where(eq(instrumentProfileVersions.profileId, profileId))
				.orderBy(desc(instrumentProfileVersions.version))
				.limit(1);
			const [version] = await tx
				.insert(instrumentProfileVersions)
				.values({
					profileId,
					version: (newest?.version ?? 0) + 1,
					createdBy: userId,
					...versionValues(input)
				})
				.returning();
			if (input.name !== profile.name)
				await tx
					.update(instrumentProfiles)
					.set({ name: input.name })
					.where(eq(instrumentProfiles.id, profileId));
			else
				await tx
					.update(instrumentProfiles)
					.set({ updatedAt: new Date() })
					.where(eq(instrumentProfiles.id, profileId));
			await recordAudit(tx, {
				projectId,
				actor: { userId },
				action: 'instrument.version',
				objectType: 'instrument_profile',
				objectId: profileId,
				before: newest ?? null,
				after: version
			});
			return version;
		});
	} catch (err) {
		if (isUniqueViolation(err))
			throw new InstrumentError(
				'name',
				'Another profile has that name, or someone saved a version at the same moment; reload and try again.'
			);
		throw err;
	}
}

// ---- Project materials ----

export const MAX_MATERIAL_MODES = 3;

const optionalText = (max: number) =>
	z.string().trim().max(max, `At most ${max} characters.`).default('');
const rowFields = Object.fromEntries(
	Array.from({ length: MAX_MATERIAL_MODES }, (_, i) => [
		[`mode_name_${i}`, optionalText(80)],
		[`shift_${i}`, optionalText(20)],
		[`source_${i}`, optionalText(300)]
	]).flat()
) as Record<string, ReturnType<typeof optionalText>>;

export const materialForm = z
	.object({
		key: z
			.string()
			.trim()
			.toLowerCase()
			.regex(
				/^[a-z0-9][a-z0-9-]{1,39}$/,
				'2–40 lower-case letters, digits or hyphens, starting with a letter or digit.'
			)
			.refine(
				(k) => !(MATERIAL_KEYS as readonly string[]).includes(k),
				'That key belongs to the built-in library; choose another.'
			),
		name: z.string().trim().min(1, 'Give the material a name.').max(120, 'At most 120 characters.'),
		notes: optionalText(2000),
		...rowFields
	})
	.superRefine((v, ctx) => {
		const row = (i: number) => ({
			name: (v as Record<string, string>)[`mode_name_${i}`],
			shift: (v as Record<string, string>)[`shift_${i}`],
			source: (v as Record<string, string>)[`source_${i}`]
		});
		for (let i = 0; i < MAX_MATERIAL_MODES; i++) {
			const r = row(i);
			if (i > 0 && !r.name && !r.shift && !r.source) continue;
			const shift = Number(r.shift);
			if (!r.shift)
				ctx.addIssue({
					code: 'custom',
					path: [`shift_${i}`],
					message: 'Enter the Raman shift (cm⁻¹).'
				});
			else if (!Number.isFinite(shift) || shift <= 0 || shift > 5000)
				ctx.addIssue({
					code: 'custom',
					path: [`shift_${i}`],
					message: 'A Raman shift between 0 and 5000 cm⁻¹.'
				});
			if (!r.name)
				ctx.addIssue({
					code: 'custom',
					path: [`mode_name_${i}`],
					message: 'Name the band, e.g. A1g.'
				});
			if (!r.source)
				ctx.addIssue({
					code: 'custom',
					path: [`source_${i}`],
					message:
						'Say where the shift comes from: a paper, your own calibration, or “from memory”.'
				});
		}
	})
	.transform((v) => {
		const rec = v as Record<string, string>;
		const modes: ProjectMaterialMode[] = [];
		for (let i = 0; i < MAX_MATERIAL_MODES; i++) {
			if (!rec[`shift_${i}`]) continue;
			modes.push({
				name: rec[`mode_name_${i}`],
				shiftCm1: Number(rec[`shift_${i}`]),
				source: rec[`source_${i}`]
			});
		}
		return { key: v.key, name: v.name, notes: v.notes, modes };
	});
export type MaterialInput = z.infer<typeof materialForm>;

export async function listProjectMaterials(projectId: number) {
	return db
		.select()
		.from(materials)
		.where(eq(materials.projectId, projectId))
		.orderBy(asc(materials.key));
}

export async function addMaterial(projectId: number, input: MaterialInput, userId: string) {
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(materials)
				.values({ projectId, ...input, createdBy: userId })
				.returning();
			await recordAudit(tx, {
				projectId,
				actor: { userId },
				action: 'material.create',
				objectType: 'material',
				objectId: row.id,
				after: row
			});
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err))
			throw new InstrumentError('key', 'This project already has a material with that key.');
		throw err;
	}
}

/**
 * A measurement that names one of the project's own materials gets that material's shifts as
 * its `modes`, so the stored metadata alone says what was fitted (and later edits cannot change it).
 */
export async function resolveMaterial<M extends Pick<MeasurementRequest, 'material' | 'modes'>>(
	projectId: number,
	metadata: M
): Promise<M> {
	const key = metadata.material;
	if (!key || (MATERIAL_KEYS as readonly string[]).includes(key)) return metadata;
	const [row] = await db
		.select()
		.from(materials)
		.where(and(eq(materials.projectId, projectId), eq(materials.key, key)));
	if (!row) {
		throw problem(
			422,
			`material “${key}” is neither a built-in key (${MATERIAL_KEYS.join(', ')}) nor one of this project's materials.`,
			{ field: 'material' }
		);
	}
	return metadata.modes ? metadata : { ...metadata, modes: row.modes.map((m) => m.shiftCm1) };
}
