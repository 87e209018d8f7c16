import { describe, expect, it } from "vitest";
import { collectPageErrors, signInAs, snap, TABLET, DESKTOP, useAppAndBrowser } from "../helpers/browser";

const env = useAppAndBrowser({ scale: 0.02 });

/** The newest reset token better-auth stored for a user (the mailed link carries it). */
const latestToken = (email: string) =>
  (
    env.server.db.$client
      .prepare(
        `select v.identifier from verification v join user u on u.id = v.value
         where u.email = ? and v.identifier like 'reset-password:%' order by v.created_at desc limit 1`,
      )
      .pluck()
      .get(email) as string | undefined
  )?.replace(/^reset-password:/, "");

describe("password reset in the browser, signed out", () => {
  it("when someone asks for a link, then the answer never tells whether the address has an account, and the link sets a new password that signs in", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    // better-auth answers a refused token with 400: the page shows it in words.
    const errors = collectPageErrors(page, [401, 400]);

    await page.goto(`${env.server.baseUrl}/sign-in`);
    await page.getByRole("link", { name: "Forgot your password?" }).click();
    await page.getByRole("heading", { level: 1, name: "Forgot your password?" }).waitFor();
    await page.getByLabel("E-mail").fill("not-an-address");
    await page.getByRole("button", { name: "Send the link" }).click();
    await page.getByText("This is not an e-mail address.").waitFor();

    // An address without an account and one with: the same words.
    const answerFor = async (email: string) => {
      await page.goto(`${env.server.baseUrl}/forgot-password`);
      await page.getByLabel("E-mail").fill(email);
      await page.getByRole("button", { name: "Send the link" }).click();
      await page.getByTestId("reset-requested").waitFor();
      return ((await page.getByTestId("reset-requested").textContent()) ?? "").replace(email, "ADDRESS");
    };
    const unknown = await answerFor("nobody-here@demo.test");
    await snap(page, "forgot-password-sent-tablet");
    const known = await answerFor("claims@demo.test");
    expect(known).toBe(unknown);
    expect(unknown).toContain("If an account exists for ADDRESS");
    expect(latestToken("nobody-here@demo.test")).toBeUndefined();
    const token = latestToken("claims@demo.test");
    expect(token).toBeTruthy();

    // A link that failed on its way in, and a made-up token: plain words, a way to ask again.
    await page.goto(`${env.server.baseUrl}/reset-password?error=INVALID_TOKEN`);
    expect(await page.getByTestId("reset-link-problem").textContent()).toContain("This link has expired or was already used.");
    await page.goto(`${env.server.baseUrl}/reset-password?token=made-up-token`);
    await page.getByLabel("New password", { exact: true }).fill("short");
    await page.getByLabel("The new password again").fill("short");
    await page.getByRole("button", { name: "Set the new password" }).click();
    await page.getByText("Use at least 10 characters.").waitFor();
    await page.getByLabel("New password", { exact: true }).fill("granite ladle morning");
    await page.getByLabel("The new password again").fill("granite ladle evening");
    await page.getByRole("button", { name: "Set the new password" }).click();
    await page.getByText("The two passwords differ. Type the same one twice.").waitFor();
    await page.getByLabel("The new password again").fill("granite ladle morning");
    await page.getByRole("button", { name: "Set the new password" }).click();
    expect(await page.getByTestId("reset-error").textContent()).toContain("This link has expired or was already used.");

    // The real token: the new password is set and signs in.
    await page.setViewportSize(DESKTOP);
    await page.goto(`${env.server.baseUrl}/reset-password?token=${encodeURIComponent(token!)}`);
    await page.getByLabel("New password", { exact: true }).fill("granite ladle morning");
    await page.getByLabel("The new password again").fill("granite ladle morning");
    await snap(page, "reset-password-desktop");
    await page.getByRole("button", { name: "Set the new password" }).click();
    await page.getByTestId("reset-done").waitFor();
    await page.getByRole("link", { name: "Sign in", exact: true }).click();
    await signInAs(page, env.server.baseUrl, "claims", "granite ladle morning");
    await page.waitForURL(`${env.server.baseUrl}/claims`);
    // The token is spent.
    expect(latestToken("claims@demo.test")).toBeUndefined();

    expect(errors).toEqual([]);
    await context.close();
  });
});
