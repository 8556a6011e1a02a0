import {
  type CreationOptional,
  DataTypes,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';

import { FACILITY_ROLES, type FacilityRole, TEAM_ROLES, type TeamRole } from '@/lib/policy';

// The role names are defined once, in lib/policy.ts (client-safe); re-exported here for the data layer.
export { FACILITY_ROLES, type FacilityRole, TEAM_ROLES, type TeamRole };

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare password_hash: string | null;
  declare is_active: CreationOptional<boolean>;
  declare notification_prefs: Record<string, boolean> | null;
  declare last_sign_in_at: Date | null;
  /** Raised by sign-out and password changes; a session token with another version is refused. */
  declare session_version: CreationOptional<number>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Team extends Model<InferAttributes<Team>, InferCreationAttributes<Team>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare description: string | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: CreationOptional<number>;
  declare user_id: ForeignKey<User['id']>;
  declare team_id: ForeignKey<Team['id']>;
  declare role: TeamRole;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class FacilityRoleGrant extends Model<
  InferAttributes<FacilityRoleGrant>,
  InferCreationAttributes<FacilityRoleGrant>
> {
  declare id: CreationOptional<number>;
  declare user_id: ForeignKey<User['id']>;
  declare role: FacilityRole;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string | null;
  declare team_id: number | null;
  declare role: TeamRole | null;
  declare facility_role: FacilityRole | null;
  declare token_hash: string;
  declare invited_by: number | null;
  declare expires_at: Date;
  declare accepted_at: Date | null;
  declare revoked_at: Date | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class PasswordResetToken extends Model<
  InferAttributes<PasswordResetToken>,
  InferCreationAttributes<PasswordResetToken>
> {
  declare id: CreationOptional<number>;
  declare user_id: number;
  declare token_hash: string;
  declare expires_at: Date;
  declare used_at: Date | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class SignInAttempt extends Model<InferAttributes<SignInAttempt>, InferCreationAttributes<SignInAttempt>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare ip: string;
  declare succeeded: boolean;
  declare created_at: CreationOptional<Date>;
}

const common = { underscored: true, timestamps: true, createdAt: 'created_at', updatedAt: 'updated_at' } as const;

export function initAccountModels(sequelize: Sequelize): void {
  User.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      password_hash: { type: DataTypes.STRING(100), allowNull: true },
      is_active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      notification_prefs: { type: DataTypes.JSON, allowNull: true },
      last_sign_in_at: { type: DataTypes.DATE(3), allowNull: true },
      session_version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'users', ...common },
  );
  Team.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: true },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'teams', ...common },
  );
  Membership.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      role: { type: DataTypes.ENUM(...TEAM_ROLES), allowNull: false },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'memberships', ...common },
  );
  FacilityRoleGrant.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      role: { type: DataTypes.ENUM(...FACILITY_ROLES), allowNull: false },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'facility_roles', ...common },
  );
  Invitation.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: true },
      team_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      role: { type: DataTypes.ENUM(...TEAM_ROLES), allowNull: true },
      facility_role: { type: DataTypes.ENUM(...FACILITY_ROLES), allowNull: true },
      token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
      invited_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      expires_at: { type: DataTypes.DATE(3), allowNull: false },
      accepted_at: { type: DataTypes.DATE(3), allowNull: true },
      revoked_at: { type: DataTypes.DATE(3), allowNull: true },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'invitations', ...common },
  );
  PasswordResetToken.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
      expires_at: { type: DataTypes.DATE(3), allowNull: false },
      used_at: { type: DataTypes.DATE(3), allowNull: true },
      created_at: DataTypes.DATE(3),
      updated_at: DataTypes.DATE(3),
    },
    { sequelize, tableName: 'password_reset_tokens', ...common },
  );
  SignInAttempt.init(
    {
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false },
      ip: { type: DataTypes.STRING(64), allowNull: false },
      succeeded: { type: DataTypes.BOOLEAN, allowNull: false },
      created_at: DataTypes.DATE(3),
    },
    {
      sequelize,
      tableName: 'sign_in_attempts',
      underscored: true,
      timestamps: true,
      createdAt: 'created_at',
      updatedAt: false,
    },
  );
}
