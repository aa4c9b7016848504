import { error, fail, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { requireProject } from '$lib/server/access';
import { measurementAudit } from '$lib/server/audit-trail';
import { db } from '$lib/server/db';
import { acquisitionTokens, users } from '$lib/server/db/schema';
import { fieldFailure, parseForm } from '$lib/server/forms';
import { approve, decisionsFor, returnReading, type SignOffResult } from '$lib/server/reviews';
import { loadMeasurement } from '$lib/server/measurements/views';
import { provenanceOf } from '$lib/server/measurements/provenance';
import { requestReanalysis } from '$lib/server/measurements/reanalyse';
import { calibrationsForReanalysis } from '$lib/server/measurements/resolve';
import { Problem } from '$lib/server/problem';
import { reanalysisSettings, type ReanalysisSettings } from '$lib/measurement-metadata';
import type { Actions, PageServerLoad } from './$types';
import {
	measurementFacts,
	measurementWithReading,
	readingFacts,
	readingHistory
} from './reading.server';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	event.depends('app:reading');
	const id = event.params.id;
	const found = await measurementWithReading(project.id, id, event.url.searchParams.get('reading'));
	const { measurement: m, reading } = found;
	const [history, uploader, decisions, audit, provenance, calibrationChoices] = await Promise.all([
		readingHistory(id),
		uploadedBy(m),
		reading ? decisionsFor(reading.id) : [],
		measurementAudit(project.id, m.id),
		reading ? provenanceOf(reading.analysisId) : null,
		calibrationsForReanalysis(found.analysis?.profileVersionId ?? null)
	]);
	return {
		measurement: { ...measurementFacts(m), uploadedBy: uploader },
		files: found.files.map((f) => ({
			part: f.part,
			fileName: f.fileName,
			bytes: f.bytes,
			sha256: f.sha256
		})),
		failure: found.analysis?.status === 'failed' ? found.analysis.failure : null,
		newestAnalysisStatus: found.analysis?.status ?? m.status,
		latestReadingId: found.latestReadingId,
		reading: reading
			? {
					...readingFacts(reading),
					settings: history.find((h) => h.id === reading.id)?.settings ?? m.metadata,
					provenance
				}
			: null,
		calibrationChoices,
		history,
		audit,
		signOff: { required: project.signOffRequired, decisions }
	};
};

/** Who put the measurement in: a person's name, or the acquisition token's name. */
async function uploadedBy(m: { uploadedBy: string | null; uploadedByToken: number | null }) {
	if (m.uploadedByToken) {
		const [t] = await db
			.select({ name: acquisitionTokens.name })
			.from(acquisitionTokens)
			.where(eq(acquisitionTokens.id, m.uploadedByToken));
		if (t) return { kind: 'token' as const, name: t.name };
	}
	if (m.uploadedBy) {
		const [u] = await db
			.select({ name: users.name, email: users.email })
			.from(users)
			.where(eq(users.id, m.uploadedBy));
		if (u) return { kind: 'person' as const, name: u.name ?? u.email };
	}
	return null;
}

// Form fields arrive as strings: blank means "keep the uploaded value", numbers are coerced,
// and the result is checked by the same schema the API uses.
const blank = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);
const num = (v: unknown) => {
	const b = blank(v);
	return typeof b === 'string' ? Number(b.replace(',', '.')) : b;
};
const reanalyseForm = z.preprocess((raw) => {
	const r = raw as Record<string, unknown>;
	return {
		lineshape: blank(r.lineshape),
		detector: blank(r.detector),
		modes:
			typeof blank(r.modes) === 'string'
				? String(r.modes)
						.split(/[\s;]+/)
						.map(num)
				: undefined,
		c_factor: num(r.c_factor),
		u_c_factor: num(r.u_c_factor),
		coverage_factor: num(r.coverage_factor),
		monte_carlo: num(r.monte_carlo),
		calibration: num(r.calibration)
	};
}, reanalysisSettings);

const HINTS: Record<string, string> = {
	lineshape: 'Choose Lorentzian, Gaussian or pseudo-Voigt.',
	detector: 'Choose photon counting or energy detection.',
	modes: 'Modes must be Raman shifts in cm⁻¹ separated by spaces, e.g. 418 645.',
	c_factor: 'C must be a number above zero, e.g. 1.000.',
	u_c_factor: 'u(C) must be a number, zero or above.',
	coverage_factor: 'k must be a number from 1 to 5 (2 gives about 95 %).',
	monte_carlo: 'Trials must be a whole number from 1000 to 200000, or left empty.',
	calibration: 'Choose one of the profile’s calibrations, or keep the one used.'
};

export const actions: Actions = {
	reanalyse: async (event) => {
		const { user, project } = await requireProject(event, 'reanalyse');
		const parsed = await parseForm(event.request, reanalyseForm);
		if (!parsed.ok) {
			const errors = parsed.failure.data.errors;
			for (const key of Object.keys(errors)) if (HINTS[key]) errors[key] = [HINTS[key]];
			return parsed.failure;
		}
		const found = await loadMeasurement(project.id, event.params.id);
		if (!found) error(404, 'Not found');
		// Only what differs from the upload goes in, so the audit log shows the real change.
		const changes = Object.fromEntries(
			Object.entries(parsed.data).filter(
				([k, v]) =>
					v !== undefined &&
					JSON.stringify(found.measurement.metadata[k as keyof ReanalysisSettings]) !==
						JSON.stringify(v)
			)
		) as ReanalysisSettings;
		let analysisId: string | null;
		try {
			analysisId = await requestReanalysis(project.id, found.measurement.id, changes, {
				userId: user.id
			});
		} catch (err) {
			if (!(err instanceof Problem)) throw err;
			return fieldFailure(400, String(err.extra.field ?? 'calibration'), err.detail);
		}
		if (!analysisId) error(404, 'Not found');
		redirect(303, `/projects/${project.slug}/measurements/${found.measurement.id}?requested=1`);
	},
	approve: (event) => signOff(approve)(event),
	return: (event) => signOff(returnReading)(event)
};

const signOffForm = z.object({
	reading: z.uuid(),
	comment: z.string().max(4000, 'Keep the comment under 4000 characters.').default('')
});

/** A sign-off action: approve or return the reading named in the form. */
function signOff(decide: typeof returnReading) {
	return async (event: Parameters<Actions[string]>[0]) => {
		const { user, project } = await requireProject(event, 'sign-off');
		const parsed = await parseForm(event.request, signOffForm);
		if (!parsed.ok) return parsed.failure;
		// The decision is about a reading of the measurement in the address, not any of the project's.
		await measurementWithReading(project.id, event.params.id, parsed.data.reading);
		const result: SignOffResult = await decide(
			project.id,
			parsed.data.reading,
			user.id,
			parsed.data.comment
		);
		if (!result.ok) {
			if (result.reason === 'not-found') error(404, 'This measurement has no such reading.');
			if (result.reason === 'comment-required')
				return fieldFailure(400, 'comment', 'Say what the analyst should change before returning.');
			return fail(409, {
				errors: { decision: ['This reading is already approved; its sign-off is final.'] },
				values: {} as Record<string, string>
			});
		}
		redirect(
			303,
			`/projects/${project.slug}/measurements/${event.params.id}?reading=${parsed.data.reading}`
		);
	};
}
