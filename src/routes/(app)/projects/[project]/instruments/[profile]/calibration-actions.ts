import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import {
	constantForm,
	createConstantCalibration,
	createCurveCalibration,
	curveForm,
	createLampCalibration,
	lampForm,
	MAX_LAMP_BYTES,
	createReferenceCalibration,
	referenceForm,
	retireCalibration
} from '$lib/server/calibrations';
import { parseForm } from '$lib/server/forms';
import { InstrumentError } from '$lib/server/instruments';

/**
 * The profile page's calibration actions. A failure names its form (`calibration`) so the page
 * shows the errors beside that form and not beside the profile editor.
 */

type Which = 'constant' | 'reference' | 'lamp' | 'curve';

export function profileId(raw: string): number {
	const id = Number(raw);
	if (!Number.isSafeInteger(id) || id <= 0) error(404, 'Not found');
	return id;
}

/** The file field of a form, read from a copy of the body that parseForm consumes. */
async function readUpload(
	copy: Request,
	field: string,
	what: string
): Promise<{ name: string; text: string } | { message: string }> {
	const file = (await copy.formData()).get(field);
	if (!(file instanceof File) || file.size === 0) return { message: `Choose ${what}.` };
	if (file.size > MAX_LAMP_BYTES) return { message: 'The file is larger than 5 MB.' };
	return { name: file.name, text: await file.text() };
}

async function add(event: RequestEvent, which: Which) {
	const { project, user } = await requireProject(event, 'upload');
	const id = profileId(event.params.profile ?? '');
	try {
		if (which === 'constant') {
			const form = await parseForm(event.request, constantForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			await createConstantCalibration(project.id, id, form.data, user.id);
		} else if (which === 'lamp') {
			const copy = event.request.clone();
			const copy2 = event.request.clone();
			const form = await parseForm(event.request, lampForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			const upload = await readUpload(
				copy,
				which,
				'the lamp spectrum (shift or wavelength, counts)'
			);
			if ('message' in upload)
				return fail(400, {
					calibration: which,
					errors: { lamp: [upload.message] },
					values: form.data
				});
			let table: { name: string; text: string } | undefined;
			if (form.data.reference === 'certified-table') {
				const got = await readUpload(
					copy2,
					'radiance',
					'the certified radiance table (wavelength in nm, spectral radiance)'
				);
				if ('message' in got)
					return fail(400, {
						calibration: which,
						errors: { radiance: [got.message] },
						values: form.data
					});
				table = got;
			}
			await createLampCalibration(project.id, id, form.data, upload, user.id, table);
		} else if (which === 'curve') {
			const copy = event.request.clone();
			const form = await parseForm(event.request, curveForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			const upload = await readUpload(copy, which, 'the response file (shift, response)');
			if ('message' in upload)
				return fail(400, {
					calibration: which,
					errors: { curve: [upload.message] },
					values: form.data
				});
			await createCurveCalibration(project.id, id, form.data, upload, user.id);
		} else {
			const form = await parseForm(event.request, referenceForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			await createReferenceCalibration(project.id, id, form.data, user.id);
		}
	} catch (err) {
		if (err instanceof InstrumentError) {
			if (err.status === 404) error(404, 'Not found');
			return fail(err.status, {
				calibration: which,
				errors: { [err.field]: [err.message] },
				values: {} as Record<string, string>
			});
		}
		throw err;
	}
	redirect(303, `/projects/${project.slug}/instruments/${id}?calibrated=1#calibrations`);
}

export const calibrationActions = {
	addConstant: (event: RequestEvent) => add(event, 'constant'),
	addReference: (event: RequestEvent) => add(event, 'reference'),
	addLamp: (event: RequestEvent) => add(event, 'lamp'),
	addCurve: (event: RequestEvent) => add(event, 'curve'),
	retire: async (event: RequestEvent) => {
		const { project, user } = await requireProject(event, 'upload');
		const id = profileId(event.params.profile ?? '');
		const calibrationId = Number((await event.request.formData()).get('id'));
		if (!Number.isSafeInteger(calibrationId) || calibrationId <= 0) error(404, 'Not found');
		try {
			await retireCalibration(project.id, id, calibrationId, user.id);
		} catch (err) {
			if (err instanceof InstrumentError && err.status === 404) error(404, 'Not found');
			throw err;
		}
		redirect(303, `/projects/${project.slug}/instruments/${id}#calibrations`);
	}
};
