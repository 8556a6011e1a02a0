/**
 * Scan search text: the free-text filter of the scan table (`q`, a substring of the title or of the raw file's
 * name) reads one column of `scans` instead of joining `raw_files` for every scan of the campaign.
 *
 * `scans.search_text` holds the title and the file name separated by a line feed (the filter never matches across
 * it: lib/db/queries/scans.ts falls back to the two columns for a filter containing one). Triggers keep it current
 * on every insert and update of `scans` and on a rename of a raw file, so no application code has to remember it.
 * The index (campaign_id, search_text) covers the filter: MariaDB checks the LIKE on index entries of the one
 * campaign instead of reading rows. Substring semantics and the case-insensitive collation stay what they were.
 *
 * Creating triggers needs the TRIGGER privilege (the app's user has ALL on its database) and, on a server with
 * binary logging, SUPER or log_bin_trust_function_creators = 1.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

const SEP = "'\\n'";
const fromFile = (idExpr: string) => `(SELECT f.original_name FROM raw_files f WHERE f.id = ${idExpr})`;

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('scans', 'search_text', { type: DataTypes.STRING(512), allowNull: true });
  await qi.sequelize.query(
    `UPDATE scans s JOIN raw_files f ON f.id = s.raw_file_id
        SET s.search_text = CONCAT_WS(${SEP}, s.title, f.original_name)`,
  );
  await qi.sequelize.query(
    `CREATE TRIGGER scans_search_text_insert BEFORE INSERT ON scans FOR EACH ROW
       SET NEW.search_text = CONCAT_WS(${SEP}, NEW.title, ${fromFile('NEW.raw_file_id')})`,
  );
  // An update that changes neither the title nor the file keeps the value given (the raw_files trigger sets it).
  await qi.sequelize.query(
    `CREATE TRIGGER scans_search_text_update BEFORE UPDATE ON scans FOR EACH ROW
       IF NOT (NEW.title <=> OLD.title) OR NOT (NEW.raw_file_id <=> OLD.raw_file_id) THEN
         SET NEW.search_text = CONCAT_WS(${SEP}, NEW.title, ${fromFile('NEW.raw_file_id')});
       END IF`,
  );
  await qi.sequelize.query(
    `CREATE TRIGGER raw_files_search_text_update AFTER UPDATE ON raw_files FOR EACH ROW
       IF NOT (NEW.original_name <=> OLD.original_name) THEN
         UPDATE scans SET search_text = CONCAT_WS(${SEP}, title, NEW.original_name) WHERE raw_file_id = NEW.id;
       END IF`,
  );
  await qi.addIndex('scans', ['campaign_id', 'search_text', 'created_at'], { name: 'scans_campaign_search' });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.sequelize.query('DROP TRIGGER IF EXISTS raw_files_search_text_update');
  await qi.sequelize.query('DROP TRIGGER IF EXISTS scans_search_text_update');
  await qi.sequelize.query('DROP TRIGGER IF EXISTS scans_search_text_insert');
  await qi.removeIndex('scans', 'scans_campaign_search');
  await qi.removeColumn('scans', 'search_text');
}
