import { fail, redirect } from '@sveltejs/kit';
import { measurementMetadata, MATERIAL_MODES } from '$lib/measurement-metadata';
import { requireProject } from '$lib/server/access';
import { listProjectMaterials } from '$lib/server/instruments';
import { profilesForUpload } from '$lib/server/measurements/resolve';
import { ingestMeasurement, type IncomingFile, type Part } from '$lib/server/measurements/ingest';
import { MAX_FILE_BYTES } from '$lib/server/measurements/limits';
import { filesFromForm } from '$lib/server/measurements/requests';
import { Problem } from '$lib/server/problem';
import { parseSpectrum } from '$lib/thermometry/parse';
import { EngineError } from '$lib/thermometry/types';
import { FIELDS, issuesByField, LABELS, metadataFromFields } from './metadata-form';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'upload');
	const builtIn = Object.entries(MATERIAL_MODES).map(([key, m]) => ({
		key,
		label: m.label,
		modes: [...m.modes]
	}));
	// The project's own materials follow the library; ingest turns their key into their modes.
	const own = (await listProjectMaterials(project.id)).map((m) => ({
		key: m.key,
		label: `${m.name} (this project)`,
		modes: m.modes.map((mode) => mode.shiftCm1)
	}));
	const materials = [...builtIn, ...own];
	return { materials, profiles: await profilesForUpload(project.id), maxFileBytes: MAX_FILE_BYTES };
};

type Errors = Record<string, string[]>;

/** The part a refused file came in as, from the file name the engine put in its message. */
function partOf(files: IncomingFile[], fileName: unknown): Part | 'files' {
	return files.find((f) => f.fileName === fileName)?.part ?? 'files';
}

/** Each file parsed on its own, so a bad file is named even while the metadata is incomplete. */
function fileErrors(files: IncomingFile[]): Errors {
	const errors: Errors = {};
	for (const f of files) {
		try {
			parseSpectrum({ name: f.fileName, text: new TextDecoder().decode(f.bytes) });
		} catch (err) {
			if (err instanceof EngineError) errors[f.part] = [err.message];
			else throw err;
		}
	}
	return errors;
}

export const actions: Actions = {
	upload: async (event) => {
		const { project, user } = await requireProject(event, 'upload');
		const form = await event.request.formData();
		const values: Record<string, string> = {};
		for (const name of FIELDS) {
			const v = form.get(name);
			if (typeof v === 'string') values[name] = v;
		}

		let files: IncomingFile[];
		try {
			files = await filesFromForm(form);
		} catch (err) {
			if (err instanceof Problem)
				return fail(err.status, { values, errors: { files: [err.detail] } });
			throw err;
		}

		const parsed = measurementMetadata.safeParse(metadataFromFields((name) => values[name]));
		if (!parsed.success) {
			return fail(400, {
				values,
				errors: { ...issuesByField(parsed.error), ...fileErrors(files) }
			});
		}

		let id: string;
		try {
			const { measurement } = await ingestMeasurement({
				projectId: project.id,
				actor: { userId: user.id },
				metadata: parsed.data,
				files
			});
			id = measurement.id;
		} catch (err) {
			if (!(err instanceof Problem)) throw err;
			if (err.status === 503) return fail(503, { values, errors: {}, problem: err.detail });
			const field =
				typeof err.extra.field === 'string' && err.extra.field in LABELS
					? err.extra.field
					: err.extra.file !== undefined
						? partOf(files, err.extra.file)
						: 'files';
			return fail(err.status, { values, errors: { [field]: [err.detail] } });
		}
		redirect(303, `/projects/${project.slug}/measurements/${id}`);
	}
};
