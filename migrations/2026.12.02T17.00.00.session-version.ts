/**
 * Revocable sessions: every session token carries the user's session version from the moment it was issued, and
 * the server accepts a token only while the version in `users` is still the same. Signing out, resetting or
 * changing the password raises the version, which ends every other session of the account at once.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('users', 'session_version', {
    type: DataTypes.INTEGER.UNSIGNED,
    allowNull: false,
    defaultValue: 0,
  });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeColumn('users', 'session_version');
}
