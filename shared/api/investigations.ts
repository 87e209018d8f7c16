import { z } from "zod";

/**
 * Investigations: a process engineer opens one on defects or heats, with a problem statement,
 * hypotheses, actions (owner, due date, status), attachments, participants and a closure naming the
 * confirmed cause.
 */
export const INVESTIGATION_STATUSES = ["open", "in_progress", "closed"] as const;
export const HYPOTHESIS_STATUSES = ["open", "supported", "rejected"] as const;
export const ACTION_STATUSES = ["open", "in_progress", "done", "cancelled"] as const;

export const INVESTIGATION_STATUS_LABELS: Record<(typeof INVESTIGATION_STATUSES)[number], string> = {
  open: "Open",
  in_progress: "Under way",
  closed: "Closed",
};
export const ACTION_STATUS_LABELS: Record<(typeof ACTION_STATUSES)[number], string> = {
  open: "To do",
  in_progress: "Under way",
  done: "Done",
  cancelled: "Cancelled",
};
export const HYPOTHESIS_STATUS_LABELS: Record<(typeof HYPOTHESIS_STATUSES)[number], string> = {
  open: "Not yet tested",
  supported: "Supported",
  rejected: "Ruled out",
};

const isoDay = z.iso.date({ error: "Give the date as YYYY-MM-DD." });
const person = z.object({ id: z.string(), name: z.string(), email: z.string() });
const userId = z.string().trim().min(1).max(64);

export const personSchema = person;
export type Person = z.infer<typeof person>;

export const investigationCreateSchema = z
  .object({
    title: z.string().trim().min(3, "Give the investigation a title.").max(160),
    problemStatement: z.string().trim().min(10, "Describe the problem in a sentence or two.").max(5000),
    ownerId: userId.optional(),
    defectIds: z.array(z.number().int().positive()).max(5000).default([]),
    heatNos: z.array(z.string().trim().min(1).max(40)).max(500).default([]),
    participantIds: z.array(userId).max(50).default([]),
  })
  .refine((v) => v.defectIds.length + v.heatNos.length > 0, { message: "Choose the defects or heats the investigation looks at.", path: ["defectIds"] });
export type InvestigationCreate = z.input<typeof investigationCreateSchema>;

export const investigationUpdateSchema = z
  .object({
    title: z.string().trim().min(3).max(160).optional(),
    problemStatement: z.string().trim().min(10).max(5000).optional(),
    status: z.enum(["open", "in_progress"], { error: "Close an investigation with its closure; otherwise open or in_progress." }).optional(),
    ownerId: userId.optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const subjectsAddSchema = z
  .object({ defectIds: z.array(z.number().int().positive()).max(5000).default([]), heatNos: z.array(z.string().trim().min(1).max(40)).max(500).default([]) })
  .refine((v) => v.defectIds.length + v.heatNos.length > 0, { message: "Choose defects or heats to add." });

export const participantsSchema = z.object({ userIds: z.array(userId).min(1).max(50) });

export const hypothesisCreateSchema = z.object({
  statement: z.string().trim().min(5, "State the hypothesis.").max(1000),
  causeTag: z.string().trim().max(40).nullable().optional(),
});
export const hypothesisUpdateSchema = z
  .object({ status: z.enum(HYPOTHESIS_STATUSES).optional(), statement: z.string().trim().min(5).max(1000).optional() })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const actionCreateSchema = z.object({
  description: z.string().trim().min(3, "Describe the action.").max(1000),
  ownerId: userId,
  dueOn: isoDay,
});
export const actionUpdateSchema = z
  .object({
    description: z.string().trim().min(3).max(1000).optional(),
    ownerId: userId.optional(),
    dueOn: isoDay.optional(),
    status: z.enum(ACTION_STATUSES).optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const closeInvestigationSchema = z.object({
  confirmedCause: z.string().trim().min(1, "Name the confirmed cause tag.").max(40),
  closureNote: z.string().trim().min(5, "Say what was found and done.").max(5000),
});

export const investigationQuerySchema = z.object({
  status: z.enum([...INVESTIGATION_STATUSES, "active"]).optional(),
  heatNo: z.string().trim().max(40).optional(),
});

export const actionSchema = z.object({
  id: z.number().int(),
  description: z.string(),
  owner: person.nullable(),
  dueOn: z.string().nullable(),
  status: z.enum(ACTION_STATUSES),
  overdue: z.boolean(),
  completedAt: z.string().nullable(),
});
export const hypothesisSchema = z.object({
  id: z.number().int(),
  statement: z.string(),
  causeTag: z.string().nullable(),
  causeTagName: z.string().nullable(),
  status: z.enum(HYPOTHESIS_STATUSES),
  createdAt: z.string(),
});
export const attachmentSchema = z.object({
  id: z.string(),
  fileName: z.string(),
  mime: z.string(),
  bytes: z.number().int(),
  url: z.string(),
  at: z.string(),
  by: z.string().nullable(),
});
export type Attachment = z.infer<typeof attachmentSchema>;

export const investigationSummarySchema = z.object({
  id: z.number().int(),
  ref: z.string(),
  title: z.string(),
  status: z.enum(INVESTIGATION_STATUSES),
  owner: person.nullable(),
  openedAt: z.string(),
  closedAt: z.string().nullable(),
  defects: z.number().int(),
  heats: z.number().int(),
  actions: z.object({ total: z.number().int(), open: z.number().int(), overdue: z.number().int() }),
  confirmedCause: z.object({ code: z.string(), name: z.string() }).nullable(),
});
export type InvestigationSummary = z.infer<typeof investigationSummarySchema>;

export const investigationSchema = investigationSummarySchema.extend({
  problemStatement: z.string(),
  closureNote: z.string().nullable(),
  subjects: z.object({
    heats: z.array(z.object({ heatNo: z.string(), grade: z.string(), castStart: z.string() })),
    defects: z.array(
      z.object({
        id: z.number().int(),
        slabId: z.string(),
        heatNo: z.string(),
        type: z.string(),
        typeName: z.string(),
        severity: z.number().int(),
        foundAt: z.string(),
        causes: z.array(z.string()),
      }),
    ),
  }),
  participants: z.array(person),
  hypotheses: z.array(hypothesisSchema),
  actionList: z.array(actionSchema),
  attachments: z.array(attachmentSchema),
  history: z.array(z.object({ at: z.string(), by: z.string().nullable(), action: z.string() })),
});
export type Investigation = z.infer<typeof investigationSchema>;
