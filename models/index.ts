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

/** One published version of a CRF (schema, ui, rules) with the SHA-256 of its files. Never changed once published. */
export class FormDefinition extends Model<InferAttributes<FormDefinition>, InferCreationAttributes<FormDefinition>> {
  declare id: CreationOptional<number>;
  declare formKey: string;
  declare version: number;
  declare title: string;
  /** 'all', 'unblinded' or 'assessor' (forms/README.md). */
  declare access: string;
  declare schemaJson: Record<string, unknown>;
  declare uiJson: Record<string, unknown>;
  declare rulesJson: Record<string, unknown>;
  declare contentHash: string;
  declare createdAt: CreationOptional<Date>;
}
FormDefinition.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    formKey: { type: DataTypes.STRING(60), allowNull: false },
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    title: { type: DataTypes.STRING(200), allowNull: false },
    access: { type: DataTypes.STRING(20), allowNull: false },
    schemaJson: { type: DataTypes.JSON, allowNull: false },
    uiJson: { type: DataTypes.JSON, allowNull: false },
    rulesJson: { type: DataTypes.JSON, allowNull: false },
    contentHash: { type: DataTypes.CHAR(64), allowNull: false },
    createdAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'form_definitions', updatedAt: false },
);

/** The version of each form a study uses for new records. */
export class StudyForm extends Model<InferAttributes<StudyForm>, InferCreationAttributes<StudyForm>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare formKey: string;
  declare version: number;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
StudyForm.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    formKey: { type: DataTypes.STRING(60), allowNull: false },
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'study_forms' },
);

/** A screened patient of a site; no names or hospital numbers are stored centrally. */
export class Participant extends Model<InferAttributes<Participant>, InferCreationAttributes<Participant>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  /** The site's own screening number. */
  declare screeningNumber: string;
  /** Study ID assigned at randomisation, e.g. TEMPO-HHC-001. */
  declare subjectCode: string | null;
  declare status: CreationOptional<string>;
  declare createdBy: number | null;
  /** Screening log: date screened, age in years and sex (M/F/U); nothing that identifies the person. */
  declare screeningDate: CreationOptional<string | null>;
  declare age: CreationOptional<number | null>;
  declare sex: CreationOptional<string | null>;
  /** pending, eligible, not_eligible, declined or other. */
  declare screeningOutcome: CreationOptional<string>;
  declare screeningReasons: CreationOptional<string[] | null>;
  /** Set when the allocation was revealed by emergency unblinding. */
  declare unblindedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Participant.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    screeningNumber: { type: DataTypes.STRING(40), allowNull: false },
    subjectCode: { type: DataTypes.STRING(40), allowNull: true },
    status: { type: DataTypes.STRING(30), allowNull: false, defaultValue: 'screening' },
    createdBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    screeningDate: { type: DataTypes.DATEONLY, allowNull: true },
    age: { type: DataTypes.TINYINT.UNSIGNED, allowNull: true },
    sex: { type: DataTypes.STRING(1), allowNull: true },
    screeningOutcome: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'pending' },
    screeningReasons: { type: DataTypes.JSON, allowNull: true },
    unblindedAt: { type: DataTypes.DATE(3), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'participants' },
);

/** One filled CRF for a participant (and visit and instance). Never deleted: voided with a reason. */
export class CrfRecord extends Model<InferAttributes<CrfRecord>, InferCreationAttributes<CrfRecord>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare formKey: string;
  /** The definition version the record was entered with; it is displayed and validated with that version. */
  declare formVersion: number;
  declare visitKey: string;
  declare instance: number;
  declare status: 'draft' | 'submitted' | 'voided';
  /** Items entered by people. */
  declare data: Record<string, unknown>;
  /** Items computed on the server. */
  declare derived: Record<string, unknown>;
  /** Soft edit-check findings awaiting review. */
  declare review: unknown[];
  /** Optimistic concurrency: incremented on every save. */
  declare lockVersion: number;
  declare createdBy: number | null;
  declare updatedBy: number | null;
  declare submittedAt: Date | null;
  declare voidReason: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
CrfRecord.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    formKey: { type: DataTypes.STRING(60), allowNull: false },
    formVersion: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    visitKey: { type: DataTypes.STRING(40), allowNull: false, defaultValue: '' },
    instance: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    status: { type: DataTypes.STRING(20), allowNull: false },
    data: { type: DataTypes.JSON, allowNull: false },
    derived: { type: DataTypes.JSON, allowNull: false },
    review: { type: DataTypes.JSON, allowNull: false },
    lockVersion: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    createdBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    updatedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    submittedAt: { type: DataTypes.DATE(3), allowNull: true },
    voidReason: { type: DataTypes.STRING(500), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'crf_records' },
);

/** A file kept in object storage (signed consent forms); append-only. */
export class Upload extends Model<InferAttributes<Upload>, InferCreationAttributes<Upload>> {
  declare id: CreationOptional<number>;
  /** Opaque id used in URLs and CRF items. */
  declare publicId: string;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare purpose: string;
  /** Object key in the bucket; never derived from the client's file name. */
  declare objectKey: string;
  declare sha256: string;
  declare sizeBytes: number;
  /** Type detected from the file's bytes. */
  declare mime: string;
  declare uploadedBy: number;
  declare createdAt: CreationOptional<Date>;
}
Upload.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    publicId: { type: DataTypes.STRING(40), allowNull: false },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    purpose: { type: DataTypes.STRING(30), allowNull: false },
    objectKey: { type: DataTypes.STRING(300), allowNull: false },
    sha256: { type: DataTypes.CHAR(64), allowNull: false },
    sizeBytes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    mime: { type: DataTypes.STRING(60), allowNull: false },
    uploadedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    createdAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'uploads', updatedAt: false },
);

/** Written once when randomisation is activated: the secret seed and the commitment over seed and schedule. */
export class RandomisationSetup extends Model<InferAttributes<RandomisationSetup>, InferCreationAttributes<RandomisationSetup>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare algorithmVersion: string;
  /** Secret until database lock: no route returns it. */
  declare seed: string;
  declare commitment: string;
  declare perStratum: number;
  declare activatedBy: number;
  declare activatedAt: Date;
}
RandomisationSetup.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    algorithmVersion: { type: DataTypes.STRING(40), allowNull: false },
    seed: { type: DataTypes.STRING(128), allowNull: false },
    commitment: { type: DataTypes.CHAR(64), allowNull: false },
    perStratum: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    activatedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    activatedAt: { type: DataTypes.DATE(3), allowNull: false },
  },
  { sequelize, tableName: 'randomisation_setups', timestamps: false },
);

/** One slot of the concealed allocation schedule; used at most once (unique participant). */
export class AllocationSlot extends Model<InferAttributes<AllocationSlot>, InferCreationAttributes<AllocationSlot>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare stratum: string;
  declare slot: number;
  declare arm: string;
  declare block: number;
  declare blockSize: number;
  declare participantId: number | null;
  declare usedAt: Date | null;
}
AllocationSlot.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    stratum: { type: DataTypes.STRING(120), allowNull: false },
    slot: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    arm: { type: DataTypes.STRING(20), allowNull: false },
    block: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    blockSize: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    usedAt: { type: DataTypes.DATE(3), allowNull: true },
  },
  { sequelize, tableName: 'allocation_slots', timestamps: false },
);

/** A participant's allocation: one per participant, one per slot (unique constraints). */
export class Allocation extends Model<InferAttributes<Allocation>, InferCreationAttributes<Allocation>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare slotId: number;
  declare stratum: string;
  declare arm: string;
  declare allocatedBy: number;
  declare allocatedAt: Date;
}
Allocation.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    slotId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    stratum: { type: DataTypes.STRING(120), allowNull: false },
    arm: { type: DataTypes.STRING(20), allowNull: false },
    allocatedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    allocatedAt: { type: DataTypes.DATE(3), allowNull: false },
  },
  { sequelize, tableName: 'allocations', timestamps: false },
);

/** The unblinding register: every emergency reveal of an allocation (append-only). */
export class UnblindingEvent extends Model<InferAttributes<UnblindingEvent>, InferCreationAttributes<UnblindingEvent>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare userId: number;
  declare role: string;
  declare reason: string;
  declare at: Date;
}
UnblindingEvent.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    userId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    role: { type: DataTypes.STRING(32), allowNull: false },
    reason: { type: DataTypes.STRING(1000), allowNull: false },
    at: { type: DataTypes.DATE(3), allowNull: false },
  },
  { sequelize, tableName: 'unblinding_events', timestamps: false },
);

/** A scheduled visit of a participant: target date and window from day 0 (the repair), completion date when done. */
export class Visit extends Model<InferAttributes<Visit>, InferCreationAttributes<Visit>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare visitKey: string;
  declare label: string;
  /** Date of the tendon repair (day 0). */
  declare day0: string;
  declare target: string;
  declare earliest: string;
  declare latest: string;
  /** Outcome visit done by a blinded assessor. */
  declare blinded: boolean;
  declare required: boolean;
  declare forms: string[];
  declare completedOn: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Visit.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    visitKey: { type: DataTypes.STRING(40), allowNull: false },
    label: { type: DataTypes.STRING(100), allowNull: false },
    day0: { type: DataTypes.DATEONLY, allowNull: false },
    target: { type: DataTypes.DATEONLY, allowNull: false },
    earliest: { type: DataTypes.DATEONLY, allowNull: false },
    latest: { type: DataTypes.DATEONLY, allowNull: false },
    blinded: { type: DataTypes.BOOLEAN, allowNull: false },
    required: { type: DataTypes.BOOLEAN, allowNull: false },
    forms: { type: DataTypes.JSON, allowNull: false },
    completedOn: { type: DataTypes.DATEONLY, allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'visits' },
);

/** One reminder e-mail sent for a visit; the unique (visit, kind) makes the reminder job idempotent. */
export class ReminderLog extends Model<InferAttributes<ReminderLog>, InferCreationAttributes<ReminderLog>> {
  declare id: CreationOptional<number>;
  declare visitId: number;
  declare kind: 'window_open' | 'closing_soon' | 'overdue';
  declare recipients: string[];
  declare sentAt: Date;
}
ReminderLog.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    visitId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    kind: { type: DataTypes.STRING(20), allowNull: false },
    recipients: { type: DataTypes.JSON, allowNull: false },
    sentAt: { type: DataTypes.DATE(3), allowNull: false },
  },
  { sequelize, tableName: 'reminder_log', timestamps: false },
);

/** A data query on one item: open → answered → closed (re-openable); every step is a message and an audit row. */
export class Query extends Model<InferAttributes<Query>, InferCreationAttributes<Query>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare recordId: number;
  declare formKey: string;
  /** JSON Pointer of the item queried. */
  declare itemPath: string;
  declare state: 'open' | 'answered' | 'closed';
  /** Opened by a person or by a soft edit check. */
  declare source: 'manual' | 'edit_check';
  declare ruleId: string | null;
  declare message: string;
  declare openedBy: number | null;
  declare closedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
Query.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    recordId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    formKey: { type: DataTypes.STRING(60), allowNull: false },
    itemPath: { type: DataTypes.STRING(500), allowNull: false },
    state: { type: DataTypes.STRING(12), allowNull: false },
    source: { type: DataTypes.STRING(12), allowNull: false },
    ruleId: { type: DataTypes.STRING(80), allowNull: true },
    message: { type: DataTypes.STRING(2000), allowNull: false },
    openedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    closedAt: { type: DataTypes.DATE(3), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'queries' },
);

/** One step of a query's conversation. */
export class QueryMessage extends Model<InferAttributes<QueryMessage>, InferCreationAttributes<QueryMessage>> {
  declare id: CreationOptional<number>;
  declare queryId: number;
  declare userId: number | null;
  declare role: string;
  declare kind: 'open' | 'answer' | 'close' | 'reopen';
  declare text: string;
  declare createdAt: CreationOptional<Date>;
}
QueryMessage.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    queryId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    userId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    role: { type: DataTypes.STRING(32), allowNull: false },
    kind: { type: DataTypes.STRING(12), allowNull: false },
    text: { type: DataTypes.STRING(2000), allowNull: false },
    createdAt: { type: DataTypes.DATE(3), allowNull: false, defaultValue: DataTypes.NOW },
  },
  { sequelize, tableName: 'query_messages', timestamps: false },
);

/** Source data verification of an item ('' = the whole form); a later change clears it. */
export class Verification extends Model<InferAttributes<Verification>, InferCreationAttributes<Verification>> {
  declare id: CreationOptional<number>;
  declare recordId: number;
  declare itemPath: string;
  declare verifiedBy: number;
  declare verifiedAt: Date;
  declare clearedAt: Date | null;
  declare clearedReason: string | null;
}
Verification.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    recordId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    itemPath: { type: DataTypes.STRING(500), allowNull: false },
    verifiedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    verifiedAt: { type: DataTypes.DATE(3), allowNull: false },
    clearedAt: { type: DataTypes.DATE(3), allowNull: true },
    clearedReason: { type: DataTypes.STRING(500), allowNull: true },
  },
  { sequelize, tableName: 'verifications', timestamps: false },
);

/** An investigator's electronic signature of a casebook, linked to a hash of the signed content. */
export class Signature extends Model<InferAttributes<Signature>, InferCreationAttributes<Signature>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare signerUserId: number;
  /** Printed name at the time of signing. */
  declare signerName: string;
  declare meaning: string;
  declare signedAt: Date;
  /** SHA-256 of the signed records and their versions. */
  declare contentHash: string;
  declare status: 'valid' | 'invalidated';
  declare invalidatedAt: Date | null;
  declare invalidatedReason: string | null;
}
Signature.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    signerUserId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    signerName: { type: DataTypes.STRING(200), allowNull: false },
    meaning: { type: DataTypes.STRING(300), allowNull: false },
    signedAt: { type: DataTypes.DATE(3), allowNull: false },
    contentHash: { type: DataTypes.CHAR(64), allowNull: false },
    status: { type: DataTypes.STRING(12), allowNull: false },
    invalidatedAt: { type: DataTypes.DATE(3), allowNull: true },
    invalidatedReason: { type: DataTypes.STRING(500), allowNull: true },
  },
  { sequelize, tableName: 'signatures', timestamps: false },
);

/** The 24-hour clock of a serious adverse event, from the site's awareness. */
export class SaeReport extends Model<InferAttributes<SaeReport>, InferCreationAttributes<SaeReport>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number;
  declare participantId: number;
  declare recordId: number;
  declare awareAt: Date;
  declare deadlineAt: Date;
  declare followedUpAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
SaeReport.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participantId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    recordId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    awareAt: { type: DataTypes.DATE(3), allowNull: false },
    deadlineAt: { type: DataTypes.DATE(3), allowNull: false },
    followedUpAt: { type: DataTypes.DATE(3), allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'sae_reports' },
);

/** The lock level of a study (siteId null) or of one of its sites; no row means open. */
export class LockState extends Model<InferAttributes<LockState>, InferCreationAttributes<LockState>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number | null;
  /** open, soft (no new data entry) or hard (no writes at all). */
  declare level: 'open' | 'soft' | 'hard';
  /** When the row reached its current level. */
  declare since: Date;
  declare changedBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
LockState.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    level: { type: DataTypes.STRING(8), allowNull: false },
    since: { type: DataTypes.DATE(3), allowNull: false },
    changedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  },
  { sequelize, tableName: 'lock_states' },
);

/** A data manager's request to lower a lock by one level; a different data manager approves it. */
export class UnlockRequest extends Model<InferAttributes<UnlockRequest>, InferCreationAttributes<UnlockRequest>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number | null;
  /** The level when the request was made; approval refuses if it has changed since. */
  declare fromLevel: 'soft' | 'hard';
  declare toLevel: 'open' | 'soft';
  declare reason: string;
  /** pending until approved. */
  declare status: 'pending' | 'approved';
  declare requestedBy: number;
  declare requestedAt: Date;
  declare decidedBy: number | null;
  declare decidedAt: Date | null;
}
UnlockRequest.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    fromLevel: { type: DataTypes.STRING(8), allowNull: false },
    toLevel: { type: DataTypes.STRING(8), allowNull: false },
    reason: { type: DataTypes.STRING(500), allowNull: false },
    status: { type: DataTypes.STRING(12), allowNull: false },
    requestedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    requestedAt: { type: DataTypes.DATE(3), allowNull: false },
    decidedBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    decidedAt: { type: DataTypes.DATE(3), allowNull: true },
  },
  { sequelize, tableName: 'unlock_requests', timestamps: false },
);

/** The history of lock events (lock, unlock request, unlock approval). Append-only. */
export class LockEvent extends Model<InferAttributes<LockEvent>, InferCreationAttributes<LockEvent>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare siteId: number | null;
  /** soft_lock, hard_lock, unlock_request or unlock. */
  declare action: string;
  declare fromLevel: string;
  declare toLevel: string;
  declare reason: string | null;
  /** A hard lock made with readiness blockers acknowledged. */
  declare overridden: CreationOptional<boolean>;
  /** The readiness blockers at the time (counts and participant codes), when there were any. */
  declare blockers: unknown[] | null;
  declare unlockRequestId: number | null;
  declare actorUserId: number;
  declare actorRole: string;
  declare at: Date;
}
LockEvent.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    siteId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    action: { type: DataTypes.STRING(20), allowNull: false },
    fromLevel: { type: DataTypes.STRING(8), allowNull: false },
    toLevel: { type: DataTypes.STRING(8), allowNull: false },
    reason: { type: DataTypes.STRING(1000), allowNull: true },
    overridden: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    blockers: { type: DataTypes.JSON, allowNull: true },
    unlockRequestId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    actorUserId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    actorRole: { type: DataTypes.STRING(32), allowNull: false },
    at: { type: DataTypes.DATE(3), allowNull: false },
  },
  { sequelize, tableName: 'lock_events', timestamps: false },
);

/** An immutable dataset snapshot in object storage (JSON Lines files and a manifest); append-only. */
export class Snapshot extends Model<InferAttributes<Snapshot>, InferCreationAttributes<Snapshot>> {
  declare id: CreationOptional<number>;
  declare studyId: number;
  declare createdAt: Date;
  declare createdBy: number;
  /** Object-key prefix under which the files and manifest.json are stored. */
  declare storagePrefix: string;
  /** SHA-256 over the manifest entries (file name, rows, SHA-256 of each file). */
  declare manifestHash: string;
  /** Rows per file. */
  declare counts: Record<string, number>;
  /** Outcome of checking the activation commitment against the stored allocation schedule. */
  declare commitmentResult: Record<string, unknown>;
}
Snapshot.init(
  {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    studyId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    createdAt: { type: DataTypes.DATE(3), allowNull: false },
    createdBy: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    storagePrefix: { type: DataTypes.STRING(300), allowNull: false },
    manifestHash: { type: DataTypes.CHAR(64), allowNull: false },
    counts: { type: DataTypes.JSON, allowNull: false },
    commitmentResult: { type: DataTypes.JSON, allowNull: false },
  },
  { sequelize, tableName: 'snapshots', timestamps: false },
);

User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
Membership.belongsTo(Study, { foreignKey: 'studyId', as: 'study' });
Membership.belongsTo(Site, { foreignKey: 'siteId', as: 'site' });
Study.hasMany(Site, { foreignKey: 'studyId', as: 'sites' });
Site.belongsTo(Study, { foreignKey: 'studyId', as: 'study' });
Invitation.belongsTo(User, { foreignKey: 'userId', as: 'user' });
Invitation.belongsTo(Membership, { foreignKey: 'membershipId', as: 'membership' });

Participant.belongsTo(Site, { foreignKey: 'siteId', as: 'site' });
CrfRecord.belongsTo(Participant, { foreignKey: 'participantId', as: 'participant' });

Visit.belongsTo(Participant, { foreignKey: 'participantId', as: 'participant' });

export { sequelize };
