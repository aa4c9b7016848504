import { eq } from 'drizzle-orm';
import { db } from '../db';
import { acquisitionTokens, measurements, projects, users } from '../db/schema';
import { env } from '../env';
import { sendMail } from '../mail';

/**
 * Tell the uploader (or, for a token's upload, the person who made the token) that a
 * measurement failed or its reading carries an error flag, if their account asks for it.
 */
export async function notifyUploader(
	measurementId: string,
	what: 'failed' | 'error-flag',
	reason: string
) {
	try {
		const [row] = await db
			.select({
				m: measurements,
				slug: projects.slug,
				project: projects.name,
				tokenOwner: acquisitionTokens.createdBy
			})
			.from(measurements)
			.innerJoin(projects, eq(projects.id, measurements.projectId))
			.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, measurements.uploadedByToken))
			.where(eq(measurements.id, measurementId));
		const personId = row?.m.uploadedBy ?? row?.tokenOwner;
		if (!personId) return;
		const person = await db.query.users.findFirst({ where: eq(users.id, personId) });
		if (!person?.notifyOnProblems) return;
		const name = row.m.label ? `“${row.m.label}”` : `measurement ${measurementId.slice(0, 8)}`;
		const url = `${env().ORIGIN}/projects/${row.slug}/measurements/${measurementId}`;
		await sendMail({
			to: person.email,
			subject:
				what === 'failed'
					? `Phonotherm could not analyse ${name} (${row.project})`
					: `The reading of ${name} carries an error flag (${row.project})`,
			text: [
				what === 'failed'
					? `The analysis of ${name} in “${row.project}” failed:`
					: `The reading of ${name} in “${row.project}” gives no temperature:`,
				'',
				`  ${reason}`,
				'',
				`Open it: ${url}`,
				'',
				'You get these messages because of a setting on your Phonotherm account page.'
			].join('\n')
		});
	} catch (err) {
		// A lost notice must not fail the analysis; the reading page shows the same reason.
		console.error('mail: could not notify about', measurementId, (err as Error).message);
	}
}
