import {
  createWindowSchema,
  operatingWindowSchema,
  retiredWindowSchema,
  updateWindowSchema,
  windowFlagsQuerySchema,
  windowFlagsSchema,
  windowListQuerySchema,
  windowListSchema,
  windowParamsSchema,
} from "@shared/api/operating-windows";
import { defineRoute, type AnyRoute } from "../lib/route";
import { createWindow, listWindows, retireWindow, updateWindow, windowFlags } from "../services/operating-windows.service";
import type { Deps } from "./deps";

export function operatingWindowRoutes({ db }: Deps): AnyRoute[] {
  return [
    defineRoute({
      method: "get",
      path: "/operating-windows",
      summary:
        "The operating window rules, each live one with its record on history (slabs flagged, share with the defect against the rest, Wilson 95 % intervals, verdict); from/to: cast dates, default the last 365 days",
      tag: "operating-windows",
      access: "windows.read",
      query: windowListQuerySchema,
      responses: { 200: { description: "The rules and their records.", schema: windowListSchema } },
      handler: ({ query }) => listWindows(db, query),
    }),
    defineRoute({
      method: "post",
      path: "/operating-windows",
      summary: "Write a rule: a name, a grade family (or every family), the defect it watches (or any), and 1–4 conditions that must all hold (audited)",
      tag: "operating-windows",
      access: "windows.manage",
      body: createWindowSchema,
      status: 201,
      responses: {
        201: { description: "Written, with its record on the last 365 days.", schema: operatingWindowSchema },
        409: { description: "A live rule has the name, or the most live rules are kept." },
      },
      handler: ({ body, user }) => createWindow(db, user, body),
    }),
    defineRoute({
      method: "patch",
      path: "/operating-windows/:id",
      summary: "Change a live rule (the fields given are replaced; audited)",
      tag: "operating-windows",
      access: "windows.manage",
      params: windowParamsSchema,
      body: updateWindowSchema,
      responses: {
        200: { description: "Changed, with its record.", schema: operatingWindowSchema },
        404: { description: "No such rule." },
        409: { description: "The rule is retired, or the name is taken." },
      },
      handler: ({ params, body, user }) => updateWindow(db, user, params.id, body),
    }),
    defineRoute({
      method: "delete",
      path: "/operating-windows/:id",
      summary: "Retire a rule: it flags nothing from now on and stays in the records (audited)",
      tag: "operating-windows",
      access: "windows.manage",
      params: windowParamsSchema,
      responses: {
        200: { description: "Retired.", schema: retiredWindowSchema },
        404: { description: "No such rule." },
        409: { description: "Already retired." },
      },
      handler: ({ params, user }) => retireWindow(db, user, params.id),
    }),
    defineRoute({
      method: "get",
      path: "/operating-windows/flags",
      summary: "The live rules flagging each slab: slabIds (the plant's ids, comma-separated, at most 200) or heatNo (its slabs)",
      tag: "operating-windows",
      access: "plant.read",
      query: windowFlagsQuerySchema,
      responses: {
        200: { description: "Each slab with the rules flagging it (an association, never a clearance).", schema: windowFlagsSchema },
        404: { description: "No such heat." },
      },
      handler: ({ query }) => windowFlags(db, query),
    }),
  ];
}
