import { eq } from 'drizzle-orm';
import { recordAudit } from './audit';
import { db } from './db';
import { projects } from './db/schema';

export interface ProjectSettings {
	name: string;
	description: string;
	signOffRequired: boolean;
}

/**
 * Save an owner's changes to a project's settings. Only fields that really change are written
 * and audited, in one entry with their values before and after; an unchanged form records nothing.
 */
export async function updateProjectSettings(
	projectId: number,
	next: ProjectSettings,
	by: string
): Promise<{ changed: (keyof ProjectSettings)[] }> {
	return db.transaction(async (tx) => {
		const [current] = await tx
			.select({
				name: projects.name,
				description: projects.description,
				signOffRequired: projects.signOffRequired
			})
			.from(projects)
			.where(eq(projects.id, projectId))
			.for('update');
		const changed = (Object.keys(next) as (keyof ProjectSettings)[]).filter(
			(k) => current[k] !== next[k]
		);
		if (!changed.length) return { changed };
		const pick = (from: ProjectSettings) => Object.fromEntries(changed.map((k) => [k, from[k]]));
		await tx.update(projects).set(pick(next)).where(eq(projects.id, projectId));
		await recordAudit(tx, {
			projectId,
			actor: { userId: by },
			action: 'project.settings',
			objectType: 'project',
			objectId: projectId,
			before: pick(current),
			after: pick(next)
		});
		return { changed };
	});
}
