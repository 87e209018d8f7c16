import type { z } from "zod";
import type { defectCategoryInputSchema, defectCategoryUpdateSchema, defectTypeInputSchema, defectTypeUpdateSchema } from "@shared/api/defects";
import type { Db } from "../db/client";
import { badRequest, conflict, notFound, said } from "../lib/http-error";
import { recordAudit } from "./audit.service";

type Row = Record<string, any>;

/** The catalogue, with when the caller last logged each type (the tablet lists those first). */
export function getCatalogue(db: Db, userId: string, includeRetired: boolean) {
  const c = db.$client;
  const types = c
    .prepare(
      `select t.code, t.name, c.code as categoryCode, c.name as categoryName, t.description, t.active,
         (select max(d.created_at) from defects d where d.type_id = t.id and d.created_by = @me) as lastUsed
       from defect_types t join defect_categories c on c.id = t.category_id
       ${includeRetired ? "" : "where t.active = 1 and c.active = 1"}
       order by c.sort_order, t.code`,
    )
    .all({ me: userId }) as Row[];
  const categories = c
    .prepare(`select code, name, sort_order as sortOrder, active from defect_categories ${includeRetired ? "" : "where active = 1"} order by sort_order, code`)
    .all() as Row[];
  return {
    types: types.map((t) => ({
      code: t.code,
      name: t.name,
      categoryCode: t.categoryCode,
      categoryName: t.categoryName,
      description: t.description ?? null,
      active: Boolean(t.active),
      lastUsedByMeAt: t.lastUsed == null ? null : new Date(t.lastUsed).toISOString(),
    })),
    categories: categories.map((x) => ({ code: x.code, name: x.name, sortOrder: x.sortOrder, active: Boolean(x.active) })),
  };
}

function categoryId(db: Db, code: string): number {
  const id = db.$client.prepare("select id from defect_categories where upper(code) = upper(?)").pluck().get(code) as number | undefined;
  if (id === undefined) throw badRequest(said("catalogue.noCategory", { code }), { field: "categoryCode" });
  return id;
}

export function createDefectType(db: Db, input: z.output<typeof defectTypeInputSchema>, userId: string) {
  return db.transaction(() => {
    const code = input.code.toUpperCase();
    if (db.$client.prepare("select 1 from defect_types where upper(code) = ?").get(code)) throw conflict(said("catalogue.typeExists", { code }));
    const id = Number(
      db.$client
        .prepare("insert into defect_types (code, name, category_id, description) values (?, ?, ?, ?)")
        .run(code, input.name, categoryId(db, input.categoryCode), input.description).lastInsertRowid,
    );
    recordAudit(db, { userId, action: "defect_type.create", entity: "defect_type", entityId: code, after: { ...input, code } });
    return { id, code };
  });
}

export function updateDefectType(db: Db, code: string, input: z.output<typeof defectTypeUpdateSchema>, userId: string) {
  return db.transaction(() => {
    const before = db.$client.prepare("select * from defect_types where upper(code) = upper(?)").get(code) as Row | undefined;
    if (!before) throw notFound(said("catalogue.noType", { code }));
    const next = {
      name: input.name ?? before.name,
      category_id: input.categoryCode ? categoryId(db, input.categoryCode) : before.category_id,
      description: input.description !== undefined ? input.description : before.description,
      active: input.active === undefined ? before.active : input.active ? 1 : 0,
    };
    db.$client
      .prepare(
        "update defect_types set name = @name, category_id = @category_id, description = @description, active = @active, updated_at = @now where id = @id",
      )
      .run({ ...next, now: Date.now(), id: before.id });
    recordAudit(db, { userId, action: "defect_type.update", entity: "defect_type", entityId: before.code, before, after: next });
    return { code: before.code as string, ...next, active: Boolean(next.active) };
  });
}

export function createDefectCategory(db: Db, input: z.output<typeof defectCategoryInputSchema>, userId: string) {
  return db.transaction(() => {
    const code = input.code.toUpperCase();
    if (db.$client.prepare("select 1 from defect_categories where upper(code) = ?").get(code)) throw conflict(said("catalogue.categoryExists", { code }));
    const id = Number(
      db.$client.prepare("insert into defect_categories (code, name, sort_order) values (?, ?, ?)").run(code, input.name, input.sortOrder).lastInsertRowid,
    );
    recordAudit(db, { userId, action: "defect_category.create", entity: "defect_category", entityId: code, after: { ...input, code } });
    return { id, code };
  });
}

export function updateDefectCategory(db: Db, code: string, input: z.output<typeof defectCategoryUpdateSchema>, userId: string) {
  return db.transaction(() => {
    const before = db.$client.prepare("select * from defect_categories where upper(code) = upper(?)").get(code) as Row | undefined;
    if (!before) throw notFound(said("catalogue.noCategory", { code }));
    const next = {
      name: input.name ?? before.name,
      sort_order: input.sortOrder ?? before.sort_order,
      active: input.active === undefined ? before.active : input.active ? 1 : 0,
    };
    db.$client
      .prepare("update defect_categories set name = @name, sort_order = @sort_order, active = @active, updated_at = @now where id = @id")
      .run({ ...next, now: Date.now(), id: before.id });
    recordAudit(db, { userId, action: "defect_category.update", entity: "defect_category", entityId: before.code, before, after: next });
    return { code: before.code as string, name: next.name, sortOrder: next.sort_order, active: Boolean(next.active) };
  });
}
