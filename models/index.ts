import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type ForeignKey } from 'sequelize';
import { getSequelize } from './sequelize';
import type { Role } from '../lib/roles';
import { ROLES } from '../lib/roles';

// The one model registry: every model is initialised here on the one Sequelize instance,
// and every association is declared here. Only lib/** and scripts import this module.
const sequelize = getSequelize();

/** A person who can sign in. Users are never deleted (their id is referenced by the audit trail). */
export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  /** Unique sign-in e-mail, stored lower-case. */
  declare email: string;
  /** Printed name, used in signatures and the audit trail. */
  declare name: string;
  /** bcrypt hash; null until the invitation link has been used. */
  declare passwordHash: string | null;
  declare status: CreationOptional<'invited' | 'active' | 'deactivated'>;
  /** Consecutive failed sign-ins since the last success. */
  declare failedAttempts: CreationOptional<number>;
  /** While in the future, sign-in is refused. */
  declare lockedUntil: Date | null;
  declare lastLoginAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
User.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(200), allowNull: false },
    passwordHash: { type: DataTypes.STRING(100), allowNull: true },
    status: { type: DataTypes.ENUM('invited', 'active', 'deactivated'), allowNull: false, defaultValue: 'invited' },
    failedAttempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    lockedUntil: { type: DataTypes.DATE(3), allowNull: true },
    lastLoginAt: { type: DataTypes.DATE(3), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'users' },
);

/** A study run on the platform; its configuration (arms, schedule, randomisation) lives in `config`. */
export class Study extends Model<InferAttributes<Study>, InferCreationAttributes<Study>> {
  declare id: CreationOptional<number>;
  /** Short immutable code used in URLs, e.g. TEMPO-FT. */
  declare code: string;
  declare title: string;
  declare status: CreationOptional<'setup' | 'recruiting' | 'follow_up' | 'closed'>;
  declare config: CreationOptional<Record<string, unknown>>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Study.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    code: { type: DataTypes.STRING(40), allowNull: false, unique: true },
    title: { type: DataTypes.STRING(300), allowNull: false },
    status: { type: DataTypes.ENUM('setup', 'recruiting', 'follow_up', 'closed'), allowNull: false, defaultValue: 'setup' },
    config: { type: DataTypes.JSON, allowNull: false, defaultValue: {} },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'studies' },
);

/** A recruiting hospital of a study. */
export class Site extends Model<InferAttributes<Site>, InferCreationAttributes<Site>> {
  declare id: CreationOptional<number>;
  declare studyId: ForeignKey<number>;
  /** Short code unique within the study, e.g. HHC; used in URLs and study IDs. */
  declare code: string;
  declare name: string;
  /** IANA time zone used to show local times, e.g. Europe/London. */
  declare timeZone: string;
  /** Planned number of randomised participants. */
  declare recruitmentTarget: number;
  declare active: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Site.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    code: { type: DataTypes.STRING(10), allowNull: false },
    name: { type: DataTypes.STRING(200), allowNull: false },
    timeZone: { type: DataTypes.STRING(64), allowNull: false },
    recruitmentTarget: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'sites' },
);

/** A role held by a user in a study, for one site or (siteId null) all sites. Revoked, never deleted. */
export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: CreationOptional<number>;
  declare userId: ForeignKey<number>;
  declare studyId: ForeignKey<number>;
  declare siteId: number | null;
  declare role: Role;
  declare revokedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Membership.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    userId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    role: { type: DataTypes.ENUM(...ROLES), allowNull: false },
    revokedAt: { type: DataTypes.DATE(3), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'memberships' },
);

/** A one-time set-password link; only the SHA-256 of the token is stored. */
export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>;
  declare userId: ForeignKey<number>;
  declare membershipId: number | null;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare usedAt: Date | null;
  declare invitedByUserId: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Invitation.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    userId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    membershipId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    tokenHash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    expiresAt: { type: DataTypes.DATE(3), allowNull: false },
    usedAt: { type: DataTypes.DATE(3), allowNull: true },
    invitedByUserId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'invitations' },
);

/** Sign-in, sign-out, lockout, export and download events. Append-only (the app user has INSERT and SELECT only). */
export class AccessLog extends Model<InferAttributes<AccessLog>, InferCreationAttributes<AccessLog>> {
  declare id: CreationOptional<number>;
  declare at: CreationOptional<Date>;
  declare userId: number | null;
  declare email: string | null;
  declare event: string;
  declare ip: string | null;
  declare userAgent: string | null;
  declare requestId: string | null;
  declare detail: Record<string, unknown> | null;
}
AccessLog.init(
  {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    at: { type: DataTypes.DATE(6), allowNull: false, defaultValue: DataTypes.NOW },
    userId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    email: { type: DataTypes.STRING(254), allowNull: true },
    event: { type: DataTypes.STRING(40), allowNull: false },
    ip: { type: DataTypes.STRING(64), allowNull: true },
    userAgent: { type: DataTypes.STRING(300), allowNull: true },
    requestId: { type: DataTypes.STRING(64), allowNull: true },
    detail: { type: DataTypes.JSON, allowNull: true },
  },
  { sequelize, tableName: 'access_log', timestamps: false },
);

User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
Membership.belongsTo(Study, { foreignKey: 'studyId', as: 'study' });
Membership.belongsTo(Site, { foreignKey: 'siteId', as: 'site' });
Study.hasMany(Site, { foreignKey: 'studyId', as: 'sites' });
Site.belongsTo(Study, { foreignKey: 'studyId', as: 'study' });
Invitation.belongsTo(User, { foreignKey: 'userId', as: 'user' });
Invitation.belongsTo(Membership, { foreignKey: 'membershipId', as: 'membership' });

export { sequelize };
