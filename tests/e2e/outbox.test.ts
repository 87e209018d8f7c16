import { describe, expect, it } from "vitest";
import type { OutboxPage } from "../../shared/api/mail";
import { collectPageErrors, DESKTOP, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { openFromMenu } from "../helpers/main-menu";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

describe("the mail outbox in the browser", () => {
  it("when a message failed, then the administrator finds it by status, reads it with its attachments, and queues it again", async () => {
    const now = Date.now();
    const insert = env.server.db.$client.prepare(
      `insert into email_outbox (kind, from_address, to_addresses, subject, text_body, attachments, status, attempts, next_attempt_at, last_error, created_at, updated_at)
       values (?, 'strandsight@demo.test', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    const failedId = Number(
      insert.run(
        "action_overdue",
        "quentin@demo.test, priya@demo.test",
        "Action overdue: check the tundish preheat log",
        "The action is past its due date.\nOpen the investigation to update it.",
        JSON.stringify([{ filename: "preheat-log.csv", contentType: "text/csv", bytes: 2048, file: "x.bin" }]),
        "failed",
        5,
        null,
        "connect ECONNREFUSED 127.0.0.1:2525",
        now - 60_000,
        now - 30_000,
      ).lastInsertRowid,
    );
    insert.run("invitation", "new.person@demo.test", "Your Strandsight account", "Welcome.", null, "sent", 1, null, null, now - 120_000, now - 110_000);

    const api = await env.server.agentFor("admin");
    const all = (await api.get("/api/admin/outbox")).body as OutboxPage;
    expect(all.total).toBeGreaterThanOrEqual(2);

    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "admin", TEST_PASSWORD);
    await openFromMenu(page, "Mail outbox");
    await page.getByRole("heading", { level: 1, name: "Mail outbox" }).waitFor();
    expect(await page.getByTestId("mail-transport").textContent()).toBe(all.transport);

    await page.getByTestId("outbox-status").selectOption("failed");
    await page.waitForURL((u) => u.searchParams.get("status") === "failed");
    const failedOnly = (await api.get("/api/admin/outbox?status=failed")).body as OutboxPage;
    await expect.poll(() => page.getByTestId("outbox-row").count()).toBe(failedOnly.items.length);
    const row = page.locator("[data-testid=outbox-row][data-kind=action_overdue]");
    expect(await row.locator("[data-status]").first().textContent()).toBe("Failed");
    expect((await readRows(page, "[data-testid=outbox-row][data-kind=action_overdue]"))[0]).toMatchObject({
      kind: "Action overdue",
      to: "quentin@demo.test, priya@demo.test",
      attempts: "5",
    });

    await row.getByRole("button", { name: "Action overdue: check the tundish preheat log" }).click();
    const message = page.getByTestId("mail-message");
    expect(await message.getByTestId("mail-body").textContent()).toBe("The action is past its due date.\nOpen the investigation to update it.");
    expect(await message.textContent()).toContain("preheat-log.csv");
    expect(await message.textContent()).toContain("text/csv · 2 kB");
    expect(await message.textContent()).toContain("connect ECONNREFUSED 127.0.0.1:2525");
    await snap(page, "outbox-message-tablet");
    await page.getByTestId("retry-mail").click();
    await page.getByText("“Action overdue: check the tundish preheat log” is queued again").waitFor();
    const status = env.server.db.$client.prepare("select status from email_outbox where id = ?").pluck().get(failedId);
    expect(status).not.toBe("failed");
    await page.setViewportSize(DESKTOP);
    await page.getByTestId("outbox-status").selectOption("");
    await snap(page, "outbox-desktop");

    expect(errors).toEqual([]);
    await context.close();
  });
});
