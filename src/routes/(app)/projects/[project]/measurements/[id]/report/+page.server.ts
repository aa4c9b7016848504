import { requireProject } from '$lib/server/access';
import { provenanceOf } from '$lib/server/measurements/provenance';
import { decisionsFor } from '$lib/server/reviews';
import {
	measurementFacts,
	measurementWithReading,
	readingFacts,
	readingHistory
} from '../reading.server';
import type { PageServerLoad } from './$types';

/** The printable report of one reading: the newest, or `?reading=<id>` as on the reading page. */
export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const found = await measurementWithReading(
		project.id,
		event.params.id,
		event.url.searchParams.get('reading')
	);
	const { measurement: m, reading } = found;
	const [history, provenance, decisions] = await Promise.all([
		readingHistory(m.id),
		reading ? provenanceOf(reading.analysisId) : null,
		reading ? decisionsFor(reading.id) : []
	]);
	return {
		measurement: measurementFacts(m),
		files: found.files.map((f) => ({ part: f.part, fileName: f.fileName, sha256: f.sha256 })),
		reading: reading ? readingFacts(reading) : null,
		latest: reading == null || reading.id === found.latestReadingId,
		// As on the reading page: the settings this reading was made with.
		settings: history.find((h) => h.id === reading?.id)?.settings ?? m.metadata,
		provenance,
		decisions,
		signOffRequired: project.signOffRequired,
		printedAt: new Date()
	};
};
