// Every table of the product. snake_case columns, integer timestamps in milliseconds.
// The four auth tables follow the field names better-auth's Drizzle adapter expects (with its admin
// plugin's columns); everything after them is the plant.
import { sql } from "drizzle-orm";
import type { EmbrCalibration } from "../metallurgy/embr";
import { check, index, integer, primaryKey, real, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";

const nowMs = sql`(cast(unixepoch('subsecond') * 1000 as integer))`;

const timestamps = {
  createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
};

// ---------------------------------------------------------------------------------------------
// Sign-in (better-auth)
// ---------------------------------------------------------------------------------------------

export const user = sqliteTable("user", {
  id: text("id").primaryKey(),
  name: text("name").notNull(),
  email: text("email").notNull().unique(),
  emailVerified: integer("email_verified", { mode: "boolean" }).notNull().default(false),
  image: text("image"),
  // Comma-separated role names, as the admin plugin stores several roles.
  role: text("role"),
  banned: integer("banned", { mode: "boolean" }).default(false),
  banReason: text("ban_reason"),
  banExpires: integer("ban_expires", { mode: "timestamp_ms" }),
  // An administrator set a first password: the person must choose their own before anything else
  // (server/middleware/require-role.ts); cleared by their own change or a reset.
  mustChangePassword: integer("must_change_password", { mode: "boolean" }).notNull().default(false),
  // The language the person chose for the screens, e-mails and workbooks (shared/i18n); null: the browser's.
  language: text("language"),
  createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
});

export const session = sqliteTable(
  "session",
  {
    id: text("id").primaryKey(),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    token: text("token").notNull().unique(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    ipAddress: text("ip_address"),
    userAgent: text("user_agent"),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    impersonatedBy: text("impersonated_by"),
  },
  (t) => [index("session_user_idx").on(t.userId)],
);

export const account = sqliteTable(
  "account",
  {
    id: text("id").primaryKey(),
    accountId: text("account_id").notNull(),
    providerId: text("provider_id").notNull(),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    accessToken: text("access_token"),
    refreshToken: text("refresh_token"),
    idToken: text("id_token"),
    accessTokenExpiresAt: integer("access_token_expires_at", { mode: "timestamp_ms" }),
    refreshTokenExpiresAt: integer("refresh_token_expires_at", { mode: "timestamp_ms" }),
    scope: text("scope"),
    password: text("password"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [index("account_user_idx").on(t.userId)],
);

export const verification = sqliteTable(
  "verification",
  {
    id: text("id").primaryKey(),
    identifier: text("identifier").notNull(),
    value: text("value").notNull(),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [index("verification_identifier_idx").on(t.identifier)],
);

// ---------------------------------------------------------------------------------------------
// Plant setup
// ---------------------------------------------------------------------------------------------

/** Key → JSON value: liquidus coefficients, shell constant K, densities. */
export const plantSettings = sqliteTable("plant_settings", {
  key: text("key").primaryKey(),
  value: text("value", { mode: "json" }).notNull(),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  updatedBy: text("updated_by").references(() => user.id),
});

export const casters = sqliteTable("casters", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  code: text("code").notNull().unique(),
  name: text("name").notNull(),
  worksName: text("works_name").notNull(),
  machineType: text("machine_type").notNull().default("curved"),
  radiusM: real("radius_m"),
  active: integer("active", { mode: "boolean" }).notNull().default(true),
  ...timestamps,
});

// The strand's EMBr calibration is the brake formula's input, so its type lives with the formula.
export type { EmbrCalibration };

export const strands = sqliteTable(
  "strands",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    casterId: integer("caster_id")
      .notNull()
      .references(() => casters.id),
    strandNo: integer("strand_no").notNull(),
    moldThicknessMm: real("mold_thickness_mm").notNull(),
    moldWidthMinMm: real("mold_width_min_mm"),
    moldWidthMaxMm: real("mold_width_max_mm"),
    moldEffectiveLengthMm: real("mold_effective_length_mm").notNull(),
    senPortAreaMm2: real("sen_port_area_mm2").notNull(),
    senPortCount: integer("sen_port_count").notNull().default(2),
    embrCalibration: text("embr_calibration", { mode: "json" }).$type<EmbrCalibration>().notNull(),
    embrPositionMm: real("embr_position_mm"),
    active: integer("active", { mode: "boolean" }).notNull().default(true),
    ...timestamps,
  },
  (t) => [uniqueIndex("strands_caster_no_uq").on(t.casterId, t.strandNo)],
);

export const gradeFamilies = sqliteTable("grade_families", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  code: text("code").notNull().unique(),
  name: text("name").notNull(),
  description: text("description"),
  ...timestamps,
});

export const grades = sqliteTable(
  "grades",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    code: text("code").notNull().unique(),
    name: text("name").notNull(),
    familyId: integer("family_id")
      .notNull()
      .references(() => gradeFamilies.id),
    cAimPct: real("c_aim_pct"),
    active: integer("active", { mode: "boolean" }).notNull().default(true),
    ...timestamps,
  },
  (t) => [index("grades_family_idx").on(t.familyId)],
);

// ---------------------------------------------------------------------------------------------
// Production: sequences, heats, slabs, process samples
// ---------------------------------------------------------------------------------------------

export const sequences = sqliteTable(
  "sequences",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    sequenceNo: text("sequence_no").notNull().unique(),
    casterId: integer("caster_id")
      .notNull()
      .references(() => casters.id),
    startedAt: integer("started_at", { mode: "timestamp_ms" }),
    endedAt: integer("ended_at", { mode: "timestamp_ms" }),
    ...timestamps,
  },
  (t) => [index("sequences_caster_idx").on(t.casterId, t.startedAt)],
);

export const heats = sqliteTable(
  "heats",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    heatNo: text("heat_no").notNull().unique(),
    sequenceId: integer("sequence_id").references(() => sequences.id),
    /** 1 = first heat of its sequence. */
    sequencePosition: integer("sequence_position"),
    casterId: integer("caster_id")
      .notNull()
      .references(() => casters.id),
    gradeId: integer("grade_id")
      .notNull()
      .references(() => grades.id),
    castStart: integer("cast_start", { mode: "timestamp_ms" }).notNull(),
    castEnd: integer("cast_end", { mode: "timestamp_ms" }),
    ladleWeightT: real("ladle_weight_t"),
    tundishChange: integer("tundish_change", { mode: "boolean" }).notNull().default(false),
    // Heat-level casting conditions (the fallback for each slab).
    castingSpeedMPerMin: real("casting_speed_m_min").notNull(),
    tundishTempC: real("tundish_temp_c"),
    liquidusC: real("liquidus_c"),
    /** "given" when imported, "computed" from the chemistry with the plant's coefficients. */
    liquidusSource: text("liquidus_source"),
    superheatC: real("superheat_c"),
    superheatSource: text("superheat_source"),
    embrCurrentA: real("embr_current_a"),
    senDepthMm: real("sen_depth_mm"),
    argonNlPerMin: real("argon_nl_min"),
    moldLevelSdMm: real("mold_level_sd_mm"),
    // Chemistry, wt % (nitrogen in ppm).
    cPct: real("c_pct"),
    siPct: real("si_pct"),
    mnPct: real("mn_pct"),
    pPct: real("p_pct"),
    sPct: real("s_pct"),
    alPct: real("al_pct"),
    cuPct: real("cu_pct"),
    niPct: real("ni_pct"),
    crPct: real("cr_pct"),
    moPct: real("mo_pct"),
    tiPct: real("ti_pct"),
    nbPct: real("nb_pct"),
    vPct: real("v_pct"),
    nPpm: real("n_ppm"),
    ...timestamps,
  },
  (t) => [
    index("heats_cast_start_idx").on(t.castStart),
    index("heats_grade_idx").on(t.gradeId),
    index("heats_sequence_idx").on(t.sequenceId, t.sequencePosition),
    index("heats_caster_idx").on(t.casterId, t.castStart),
  ],
);

export const slabs = sqliteTable(
  "slabs",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    slabId: text("slab_id").notNull().unique(),
    heatId: integer("heat_id")
      .notNull()
      .references(() => heats.id),
    strandId: integer("strand_id")
      .notNull()
      .references(() => strands.id),
    /** Order of the piece within its heat and strand, from 1. */
    pieceNo: integer("piece_no").notNull(),
    lengthMm: real("length_mm").notNull(),
    widthMm: real("width_mm").notNull(),
    thicknessMm: real("thickness_mm").notNull(),
    weightT: real("weight_t").notNull(),
    weightSource: text("weight_source").notNull().default("given"),
    /** Position of the head end along the strand's cast length, metres from the sequence start. */
    castLengthStartM: real("cast_length_start_m"),
    /** Time the slab's head end left the mold (derived when not given). */
    castAt: integer("cast_at", { mode: "timestamp_ms" }),
    transition: integer("transition", { mode: "boolean" }).notNull().default(false),
    // Per-slab conditions when the source supplies them directly (they win over samples and heat).
    castingSpeedMPerMin: real("casting_speed_m_min"),
    superheatC: real("superheat_c"),
    embrCurrentA: real("embr_current_a"),
    senDepthMm: real("sen_depth_mm"),
    argonNlPerMin: real("argon_nl_min"),
    moldLevelSdMm: real("mold_level_sd_mm"),
    /** Overall disposition of the slab, set from its defects by the yard or quality. */
    disposition: text("disposition"),
    ...timestamps,
  },
  (t) => [
    uniqueIndex("slabs_heat_strand_piece_uq").on(t.heatId, t.strandId, t.pieceNo),
    index("slabs_strand_cast_at_idx").on(t.strandId, t.castAt),
    index("slabs_cast_at_idx").on(t.castAt),
  ],
);

/** Level-2 time series per strand. */
export const processSamples = sqliteTable(
  "process_samples",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    strandId: integer("strand_id")
      .notNull()
      .references(() => strands.id),
    sampledAt: integer("sampled_at", { mode: "timestamp_ms" }).notNull(),
    castLengthM: real("cast_length_m"),
    castingSpeedMPerMin: real("casting_speed_m_min"),
    tundishTempC: real("tundish_temp_c"),
    embrCurrentA: real("embr_current_a"),
    senDepthMm: real("sen_depth_mm"),
    argonNlPerMin: real("argon_nl_min"),
    moldLevelMm: real("mold_level_mm"),
  },
  (t) => [uniqueIndex("process_samples_strand_time_uq").on(t.strandId, t.sampledAt)],
);

// ---------------------------------------------------------------------------------------------
// Defects
// ---------------------------------------------------------------------------------------------

export const defectCategories = sqliteTable("defect_categories", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  code: text("code").notNull().unique(),
  name: text("name").notNull(),
  sortOrder: integer("sort_order").notNull().default(0),
  active: integer("active", { mode: "boolean" }).notNull().default(true),
  ...timestamps,
});

export const defectTypes = sqliteTable(
  "defect_types",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    code: text("code").notNull().unique(),
    name: text("name").notNull(),
    categoryId: integer("category_id")
      .notNull()
      .references(() => defectCategories.id),
    description: text("description"),
    active: integer("active", { mode: "boolean" }).notNull().default(true),
    ...timestamps,
  },
  (t) => [index("defect_types_category_idx").on(t.categoryId)],
);

export const defects = sqliteTable(
  "defects",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Every defect hangs on a slab. */
    slabId: integer("slab_id")
      .notNull()
      .references(() => slabs.id),
    typeId: integer("type_id")
      .notNull()
      .references(() => defectTypes.id),
    face: text("face").notNull(),
    positionAlongMm: real("position_along_mm"),
    positionAcrossMm: real("position_across_mm"),
    lengthMm: real("length_mm"),
    widthMm: real("width_mm"),
    depthMm: real("depth_mm"),
    /** 1 minor, 2 moderate, 3 major, 4 critical. */
    severity: integer("severity").notNull(),
    stage: text("stage").notNull(),
    disposition: text("disposition").notNull(),
    note: text("note"),
    /** new → confirmed | corrected | rejected (quality review). */
    reviewStatus: text("review_status").notNull().default("new"),
    reviewedBy: text("reviewed_by").references(() => user.id),
    reviewedAt: integer("reviewed_at", { mode: "timestamp_ms" }),
    /** Why an entry was corrected or rejected. */
    reviewNote: text("review_note"),
    /** Generated on the device so that a resent offline entry is stored once. */
    clientKey: text("client_key").unique(),
    foundAt: integer("found_at", { mode: "timestamp_ms" }).notNull(),
    createdBy: text("created_by").references(() => user.id),
    deletedAt: integer("deleted_at", { mode: "timestamp_ms" }),
    deletedBy: text("deleted_by").references(() => user.id),
    ...timestamps,
  },
  (t) => [
    index("defects_slab_idx").on(t.slabId),
    index("defects_type_slab_idx").on(t.typeId, t.slabId),
    index("defects_found_at_idx").on(t.foundAt),
    index("defects_review_idx").on(t.reviewStatus, t.createdAt),
    index("defects_created_by_idx").on(t.createdBy, t.createdAt),
  ],
);

export const defectPhotos = sqliteTable(
  "defect_photos",
  {
    id: text("id").primaryKey(),
    defectId: integer("defect_id")
      .notNull()
      .references(() => defects.id),
    displayFile: text("display_file").notNull(),
    displayMime: text("display_mime").notNull(),
    thumbFile: text("thumb_file").notNull(),
    width: integer("width").notNull(),
    height: integer("height").notNull(),
    bytes: integer("bytes").notNull(),
    sha256: text("sha256").notNull(),
    /** Kept for the record only; files on disk are named by generated ids. */
    originalName: text("original_name"),
    clientKey: text("client_key").unique(),
    createdBy: text("created_by").references(() => user.id),
    deletedAt: integer("deleted_at", { mode: "timestamp_ms" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  // created_by + created_at: the per-person hourly photo cap counts recent uploads on every upload.
  (t) => [index("defect_photos_defect_idx").on(t.defectId), index("defect_photos_by_time_idx").on(t.createdBy, t.createdAt)],
);

// ---------------------------------------------------------------------------------------------
// Causes and investigations
// ---------------------------------------------------------------------------------------------

export const causeGroups = sqliteTable("cause_groups", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  code: text("code").notNull().unique(),
  name: text("name").notNull(),
  sortOrder: integer("sort_order").notNull().default(0),
  ...timestamps,
});

export const causeTags = sqliteTable(
  "cause_tags",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    code: text("code").notNull().unique(),
    name: text("name").notNull(),
    groupId: integer("group_id")
      .notNull()
      .references(() => causeGroups.id),
    description: text("description"),
    /** Tags in use are retired, never deleted. */
    retiredAt: integer("retired_at", { mode: "timestamp_ms" }),
    ...timestamps,
  },
  (t) => [index("cause_tags_group_idx").on(t.groupId)],
);

/** One row per tagging; removal sets removed_at so the history stays. */
export const defectCauses = sqliteTable(
  "defect_causes",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    defectId: integer("defect_id")
      .notNull()
      .references(() => defects.id),
    tagId: integer("tag_id")
      .notNull()
      .references(() => causeTags.id),
    /** suspected | probable | confirmed */
    confidence: text("confidence").notNull(),
    note: text("note"),
    createdBy: text("created_by").references(() => user.id),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    removedAt: integer("removed_at", { mode: "timestamp_ms" }),
    removedBy: text("removed_by").references(() => user.id),
  },
  (t) => [index("defect_causes_defect_idx").on(t.defectId), index("defect_causes_tag_idx").on(t.tagId, t.defectId)],
);

export const investigations = sqliteTable(
  "investigations",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    ref: text("ref").notNull().unique(),
    title: text("title").notNull(),
    problemStatement: text("problem_statement").notNull(),
    /** open | in_progress | closed */
    status: text("status").notNull().default("open"),
    ownerId: text("owner_id").references(() => user.id),
    openedAt: integer("opened_at", { mode: "timestamp_ms" }).notNull(),
    closedAt: integer("closed_at", { mode: "timestamp_ms" }),
    confirmedCauseTagId: integer("confirmed_cause_tag_id").references(() => causeTags.id),
    closureNote: text("closure_note"),
    createdBy: text("created_by").references(() => user.id),
    ...timestamps,
  },
  (t) => [index("investigations_status_idx").on(t.status)],
);

/** What an investigation looks at: defects or whole heats. */
export const investigationSubjects = sqliteTable(
  "investigation_subjects",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    investigationId: integer("investigation_id")
      .notNull()
      .references(() => investigations.id),
    defectId: integer("defect_id").references(() => defects.id),
    heatId: integer("heat_id").references(() => heats.id),
  },
  (t) => [
    index("investigation_subjects_inv_idx").on(t.investigationId),
    index("investigation_subjects_heat_idx").on(t.heatId),
    index("investigation_subjects_defect_idx").on(t.defectId),
  ],
);

/** People who follow an investigation (besides its owner and the owners of its actions). */
export const investigationParticipants = sqliteTable(
  "investigation_participants",
  {
    investigationId: integer("investigation_id")
      .notNull()
      .references(() => investigations.id),
    userId: text("user_id")
      .notNull()
      .references(() => user.id),
    addedAt: integer("added_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [primaryKey({ columns: [t.investigationId, t.userId] })],
);

export const investigationHypotheses = sqliteTable(
  "investigation_hypotheses",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    investigationId: integer("investigation_id")
      .notNull()
      .references(() => investigations.id),
    statement: text("statement").notNull(),
    causeTagId: integer("cause_tag_id").references(() => causeTags.id),
    /** open | supported | rejected */
    status: text("status").notNull().default("open"),
    createdBy: text("created_by").references(() => user.id),
    ...timestamps,
  },
  (t) => [index("investigation_hypotheses_inv_idx").on(t.investigationId)],
);

export const investigationActions = sqliteTable(
  "investigation_actions",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    investigationId: integer("investigation_id")
      .notNull()
      .references(() => investigations.id),
    description: text("description").notNull(),
    ownerId: text("owner_id").references(() => user.id),
    dueOn: text("due_on"),
    /** open | in_progress | done | cancelled */
    status: text("status").notNull().default("open"),
    completedAt: integer("completed_at", { mode: "timestamp_ms" }),
    overdueNotifiedAt: integer("overdue_notified_at", { mode: "timestamp_ms" }),
    ...timestamps,
  },
  (t) => [index("investigation_actions_inv_idx").on(t.investigationId), index("investigation_actions_due_idx").on(t.status, t.dueOn)],
);

// ---------------------------------------------------------------------------------------------
// Claims and the rolling-mill trace
// ---------------------------------------------------------------------------------------------

/** Coil or plate → the slab it was rolled from (from the rolling mill). */
export const products = sqliteTable(
  "products",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    productId: text("product_id").notNull().unique(),
    /** coil | plate */
    kind: text("kind").notNull(),
    slabId: integer("slab_id")
      .notNull()
      .references(() => slabs.id),
    rolledAt: integer("rolled_at", { mode: "timestamp_ms" }),
    weightT: real("weight_t"),
    ...timestamps,
  },
  (t) => [index("products_slab_idx").on(t.slabId)],
);

export const claims = sqliteTable(
  "claims",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    claimNo: text("claim_no").notNull().unique(),
    customer: text("customer").notNull(),
    /** Coil or plate ids as the customer wrote them, comma-separated. */
    productIds: text("product_ids").notNull().default(""),
    receivedOn: text("received_on").notNull(),
    defectComplained: text("defect_complained").notNull(),
    quantityT: real("quantity_t"),
    /** new | under_review | accepted | rejected | closed */
    status: text("status").notNull().default("new"),
    notes: text("notes"),
    createdBy: text("created_by").references(() => user.id),
    ...timestamps,
  },
  (t) => [index("claims_status_idx").on(t.status, t.receivedOn)],
);

export const claimSlabs = sqliteTable(
  "claim_slabs",
  {
    claimId: integer("claim_id")
      .notNull()
      .references(() => claims.id),
    slabId: integer("slab_id")
      .notNull()
      .references(() => slabs.id),
    /** trace | search */
    linkedVia: text("linked_via").notNull(),
    linkedBy: text("linked_by").references(() => user.id),
    linkedAt: integer("linked_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [primaryKey({ columns: [t.claimId, t.slabId] }), index("claim_slabs_slab_idx").on(t.slabId)],
);

/** Files attached to claims and investigations (stored under UPLOAD_DIR by generated id). */
export const attachments = sqliteTable(
  "attachments",
  {
    id: text("id").primaryKey(),
    /** claim | investigation */
    ownerKind: text("owner_kind").notNull(),
    ownerId: integer("owner_id").notNull(),
    fileName: text("file_name").notNull(),
    storedFile: text("stored_file").notNull(),
    mime: text("mime").notNull(),
    bytes: integer("bytes").notNull(),
    sha256: text("sha256").notNull(),
    createdBy: text("created_by").references(() => user.id),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  // created_by + created_at: the per-person hourly attachment cap counts recent uploads.
  (t) => [index("attachments_owner_idx").on(t.ownerKind, t.ownerId), index("attachments_by_time_idx").on(t.createdBy, t.createdAt)],
);

// ---------------------------------------------------------------------------------------------
// Reports, audit, mail, tokens
// ---------------------------------------------------------------------------------------------

export const savedReports = sqliteTable(
  "saved_reports",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: text("user_id")
      .notNull()
      .references(() => user.id),
    name: text("name").notNull(),
    reportKind: text("report_kind").notNull(),
    /** The URL query string of the report, so a saved report is a shareable link. */
    query: text("query").notNull(),
    ...timestamps,
  },
  (t) => [index("saved_reports_user_idx").on(t.userId)],
);

export const auditLog = sqliteTable(
  "audit_log",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    at: integer("at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    userId: text("user_id"),
    /** The person's name as it was when they acted: a later rename does not rewrite the trail. */
    userName: text("user_name"),
    /** Who acted when it was not a person: an API token's name, "system", "seed". */
    actor: text("actor"),
    action: text("action").notNull(),
    entity: text("entity").notNull(),
    entityId: text("entity_id"),
    before: text("before", { mode: "json" }),
    after: text("after", { mode: "json" }),
  },
  (t) => [index("audit_entity_idx").on(t.entity, t.entityId), index("audit_at_idx").on(t.at)],
);

export const emailOutbox = sqliteTable(
  "email_outbox",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** What caused the message: critical_defect, action_assigned, invitation, password_reset… */
    kind: text("kind").notNull(),
    fromAddress: text("from_address").notNull(),
    toAddresses: text("to_addresses").notNull(),
    subject: text("subject").notNull(),
    textBody: text("text_body").notNull(),
    htmlBody: text("html_body"),
    /** [{ filename, contentType, bytes, file }] — the file is kept under the data folder. */
    attachments: text("attachments", { mode: "json" }),
    /** queued | sending | sent | failed */
    status: text("status").notNull().default("queued"),
    attempts: integer("attempts").notNull().default(0),
    nextAttemptAt: integer("next_attempt_at", { mode: "timestamp_ms" }),
    lastError: text("last_error"),
    sentAt: integer("sent_at", { mode: "timestamp_ms" }),
    messageId: text("message_id"),
    ...timestamps,
  },
  (t) => [index("email_outbox_status_idx").on(t.status, t.nextAttemptAt)],
);

/** Messages the local fake SMTP server received, as they arrived on the wire. */
export const mailReceived = sqliteTable("mail_received", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  receivedAt: integer("received_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  messageId: text("message_id"),
  envelopeFrom: text("envelope_from"),
  envelopeTo: text("envelope_to").notNull(),
  subject: text("subject"),
  textBody: text("text_body"),
  attachments: text("attachments", { mode: "json" }),
  raw: text("raw"),
});

export const apiTokens = sqliteTable("api_tokens", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull(),
  /** SHA-256 of the token; the token itself is shown once and never stored. */
  tokenHash: text("token_hash").notNull().unique(),
  /** First characters, so an admin can tell tokens apart. */
  prefix: text("prefix").notNull(),
  scopes: text("scopes").notNull().default("ingest"),
  createdBy: text("created_by").references(() => user.id),
  createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  lastUsedAt: integer("last_used_at", { mode: "timestamp_ms" }),
  revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
});

// ---------------------------------------------------------------------------------------------
// Resolved slab conditions and import runs (heat records issue)
// ---------------------------------------------------------------------------------------------

/**
 * Each slab's casting conditions as the reports use them, one row per slab: the slab's own value,
 * else the aggregate of the process samples cast while it passed the mold, else the heat's value —
 * with the source of each — and the values derived from them. Recomputed whenever a slab, its heat,
 * its strand's samples, its strand's settings or the plant's formula settings change.
 */
export const slabConditions = sqliteTable(
  "slab_conditions",
  {
    slabId: integer("slab_id")
      .primaryKey()
      .references(() => slabs.id),
    // The slab's place and kind, copied here so a report reads one table (kept in step by the resolver).
    heatId: integer("heat_id"),
    casterId: integer("caster_id"),
    strandId: integer("strand_id"),
    gradeId: integer("grade_id"),
    familyId: integer("family_id"),
    castAt: integer("cast_at"),
    transition: integer("transition"),
    sequencePosition: integer("sequence_position"),
    weightT: real("weight_t"),
    widthMm: real("width_mm"),
    thicknessMm: real("thickness_mm"),
    cPct: real("c_pct"),
    mnPct: real("mn_pct"),
    siPct: real("si_pct"),
    sPct: real("s_pct"),
    pPct: real("p_pct"),
    alPct: real("al_pct"),
    nbPct: real("nb_pct"),
    tiPct: real("ti_pct"),
    vPct: real("v_pct"),
    nPpm: real("n_ppm"),
    castingSpeedMPerMin: real("casting_speed_m_min"),
    castingSpeedSource: text("casting_speed_source"),
    speedMinMPerMin: real("speed_min_m_min"),
    speedMaxMPerMin: real("speed_max_m_min"),
    speedChangeMPerMin: real("speed_change_m_min"),
    superheatC: real("superheat_c"),
    superheatSource: text("superheat_source"),
    embrCurrentA: real("embr_current_a"),
    embrCurrentSource: text("embr_current_source"),
    senDepthMm: real("sen_depth_mm"),
    senDepthSource: text("sen_depth_source"),
    argonNlPerMin: real("argon_nl_min"),
    argonSource: text("argon_source"),
    moldLevelSdMm: real("mold_level_sd_mm"),
    moldLevelSdSource: text("mold_level_sd_source"),
    sampleCount: integer("sample_count").notNull().default(0),
    throughputTPerMin: real("throughput_t_min"),
    moldDwellMin: real("mold_dwell_min"),
    shellExitMm: real("shell_exit_mm"),
    metallurgicalLengthM: real("metallurgical_length_m"),
    embrFieldT: real("embr_field_t"),
    senPortVelocityMPerS: real("sen_port_velocity_m_s"),
    stuartNumber: real("stuart_number"),
    hartmannNumber: real("hartmann_number"),
    computedAt: integer("computed_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [index("slab_conditions_cast_at_idx").on(t.castAt), index("slab_conditions_heat_idx").on(t.heatId)],
);

/** One row per real import or feed call: who, what, and what it did. */
export const importRuns = sqliteTable(
  "import_runs",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    kind: text("kind").notNull(),
    /** upload | ingest */
    source: text("source").notNull(),
    fileName: text("file_name"),
    format: text("format").notNull(),
    sha256: text("sha256"),
    rows: integer("rows").notNull(),
    created: integer("created").notNull(),
    updated: integer("updated").notNull(),
    unchanged: integer("unchanged").notNull(),
    slabsResolved: integer("slabs_resolved").notNull().default(0),
    userId: text("user_id").references(() => user.id),
    tokenId: integer("token_id").references(() => apiTokens.id),
    startedAt: integer("started_at", { mode: "timestamp_ms" }).notNull(),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("import_runs_started_idx").on(t.startedAt)],
);

// ---------------------------------------------------------------------------------------------
// Risk before inspection (issue 15)
// ---------------------------------------------------------------------------------------------

/**
 * One trained version of a risk model for a defect type or category: what it may use, what it learnt
 * (terms, knots, coefficients), on which slabs, how it validated on the newest ones, who trained it.
 * At most one version per target is active (a partial unique index).
 */
export const riskModels = sqliteTable(
  "risk_models",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** type | category */
    targetKind: text("target_kind").notNull(),
    targetCode: text("target_code").notNull(),
    /** 1, 2, 3 … per target. */
    version: integer("version").notNull(),
    /** What the engineer chose: conditions, categories, knots, training window. */
    spec: text("spec", { mode: "json" }).notNull(),
    /** training | ready | failed */
    status: text("status").notNull().default("training"),
    progress: real("progress").notNull().default(0),
    progressText: text("progress_text"),
    error: text("error"),
    /** The learnt terms and coefficients (services/risk/model.ts ModelTerms); null until trained. */
    terms: text("terms", { mode: "json" }),
    lambda: real("lambda"),
    effectiveDf: real("effective_df"),
    validation: text("validation", { mode: "json" }),
    method: text("method"),
    beatsBaseline: integer("beats_baseline", { mode: "boolean" }).notNull().default(false),
    active: integer("active", { mode: "boolean" }).notNull().default(false),
    trainFrom: integer("train_from", { mode: "timestamp_ms" }),
    trainTo: integer("train_to", { mode: "timestamp_ms" }),
    trainedBy: text("trained_by").references(() => user.id),
    trainedByName: text("trained_by_name"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
    /** Risks at or above these are "high" (top 10 % of the test slabs) / "raised" (the next 20 %). */
    bandHigh: real("band_high"),
    bandRaised: real("band_raised"),
    /** The last switching on (audited as well). */
    activatedAt: integer("activated_at", { mode: "timestamp_ms" }),
    activatedByName: text("activated_by_name"),
  },
  (t) => [
    uniqueIndex("risk_models_target_version_uq").on(t.targetKind, t.targetCode, t.version),
    uniqueIndex("risk_models_one_active_uq")
      .on(t.targetKind, t.targetCode)
      .where(sql`active = 1`),
  ],
);

/** A slab's risk under a model version, with the reasons, stored when the slab is scored. */
export const slabRisks = sqliteTable(
  "slab_risks",
  {
    slabId: integer("slab_id")
      .notNull()
      .references(() => slabs.id, { onDelete: "cascade" }),
    modelId: integer("model_id")
      .notNull()
      .references(() => riskModels.id, { onDelete: "cascade" }),
    risk: real("risk").notNull(),
    /** [[condition key, value, contribution], …] largest first (labels and words rebuilt from the model when read; older rows hold full objects). */
    reasons: text("reasons", { mode: "json" }).notNull(),
    scoredAt: integer("scored_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
  },
  (t) => [primaryKey({ columns: [t.slabId, t.modelId] }), index("slab_risks_model_risk_idx").on(t.modelId, t.risk)],
);

/**
 * A process engineer's operating window for a grade family (or every family), written as plain
 * rules: a slab is outside the window — and flagged with the rule's name — when every one of its
 * conditions holds (e.g. casting speed above 1.6 m/min with brake current below 150 A). The rule may
 * name the defect type or category it guards against; its record on history is reckoned against that.
 * Retired rules are kept (their name stays in the audit) but flag nothing.
 */
export const operatingWindows = sqliteTable(
  "operating_windows",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    name: text("name").notNull(),
    /** Null: every grade family. */
    familyId: integer("family_id").references(() => gradeFamilies.id),
    /** type | category | null (any defect). */
    targetKind: text("target_kind"),
    targetCode: text("target_code"),
    /** [{ variable, op: "above" | "below", value }] — all must hold for a slab to be outside. */
    conditions: text("conditions", { mode: "json" }).notNull(),
    note: text("note"),
    createdBy: text("created_by").references(() => user.id),
    createdByName: text("created_by_name"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    retiredAt: integer("retired_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    uniqueIndex("operating_windows_live_name_uq")
      .on(t.name)
      .where(sql`retired_at is null`),
  ],
);

/**
 * A risk model's drift, reckoned month by month on the slabs judged since its training (predicted
 * against observed rate, calibration-in-the-large, AUC). One row per model and month once the month
 * has been checked; `alerted_at` when the quality engineers were e-mailed about it (once per month).
 */
export const riskDriftChecks = sqliteTable(
  "risk_drift_checks",
  {
    modelId: integer("model_id")
      .notNull()
      .references(() => riskModels.id, { onDelete: "cascade" }),
    /** YYYY-MM (UTC) of the slabs' cast time. */
    month: text("month").notNull(),
    slabs: integer("slabs").notNull(),
    affected: integer("affected").notNull(),
    predicted: real("predicted").notNull(),
    observed: real("observed").notNull(),
    /** Calibration-in-the-large on the logit scale (null where undefined). */
    citl: real("citl"),
    auc: real("auc"),
    drifted: integer("drifted", { mode: "boolean" }).notNull().default(false),
    /** Words: why it counts as drifted. */
    reason: text("reason"),
    checkedAt: integer("checked_at", { mode: "timestamp_ms" }).notNull().default(nowMs),
    alertedAt: integer("alerted_at", { mode: "timestamp_ms" }),
  },
  (t) => [primaryKey({ columns: [t.modelId, t.month] })],
);

/**
 * One row: this database's id (random, made once) and a counter of every change of slab_conditions,
 * kept by triggers (drizzle/0008_report_cache_counter.sql). The report cache's snapshot is checked
 * against both at start (server/services/report-cache-snapshot.ts), so a snapshot of another database
 * or one older than the last change is never used.
 */
export const reportCacheState = sqliteTable(
  "report_cache_state",
  {
    id: integer("id").primaryKey(),
    databaseId: text("database_id").notNull(),
    version: integer("version").notNull(),
  },
  () => [check("report_cache_state_one_row", sql`id = 1`)],
);
