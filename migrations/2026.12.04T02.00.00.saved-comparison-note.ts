/**
 * Saved comparisons (issue 13, PRODUCT.md C8): a free-text note beside the title (what the comparison is for, e.g.
 * "neon offsets at 800 nm against last year's campaign"), and an index for the list of a team's comparisons, newest
 * change first. The table itself came with the initial schema (selection, filters and axes live in `spec`).
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('saved_comparisons', 'note', { type: DataTypes.TEXT, allowNull: true });
  await qi.addIndex('saved_comparisons', ['team_id', 'updated_at'], { name: 'saved_comparisons_team_updated' });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeIndex('saved_comparisons', 'saved_comparisons_team_updated');
  await qi.removeColumn('saved_comparisons', 'note');
}
