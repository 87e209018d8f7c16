import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";
import { ARTIFACTS, collectPageErrors, DESKTOP, launchBrowser, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { fakeCameraArgs, labelImage, writeY4m, type LabelCode } from "../helpers/fake-camera";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * Scanning a slab id on the yard screen: Chromium's fake camera plays a video made in the test from
 * a barcode of a demo slab's id (bwip-js draws it); the app reads it through the browser's
 * BarcodeDetector where it has one, else ZXing. The hand scanner (typing and Enter) keeps working.
 */
const env = useAppAndBrowser({ scale: 0.02 });

function demoSlabId(offset = 0): string {
  return env.server.db.$client.prepare("select slab_id from slabs order by id desc limit 1 offset ?").pluck().get(offset) as string;
}

/** Which reader the app should pick in this Chromium: the same rule as the app, asked of the page. */
function expectedEngine(page: Page): Promise<string> {
  return page.evaluate(async () => {
    const Native = (globalThis as { BarcodeDetector?: { getSupportedFormats(): Promise<string[]> } }).BarcodeDetector;
    if (!Native) return "zxing";
    const formats = await Native.getSupportedFormats();
    return ["qr_code", "code_128", "data_matrix"].every((f) => formats.includes(f)) ? "browser" : "zxing";
  });
}

/** A Chromium whose camera shows `code` holding `text`, with the inspector on the yard screen. */
async function yardWithCamera(args: string[]) {
  const browser: Browser = await launchBrowser(args);
  const context = await browser.newContext({ viewport: TABLET, hasTouch: true });
  const page = await context.newPage();
  page.setDefaultTimeout(20_000);
  const errors = collectPageErrors(page);
  await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
  await page.waitForURL(/\/yard$/);
  await page.getByRole("heading", { level: 1, name: "Find a slab" }).waitFor();
  return { browser, page, errors };
}

async function sheetSnap(page: Page, name: string) {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`) });
}

async function cameraShowing(code: LabelCode, text: string) {
  return fakeCameraArgs(await writeY4m(await labelImage(code, text)));
}

// Each test starts its own Chromium (one fake camera per browser) on a machine shared by several runs.
describe("scanning a slab id on the yard screen", { timeout: 120_000 }, () => {
  it.each([
    ["Code 128", "code128", 0],
    ["QR", "qrcode", 1],
    ["Data Matrix", "datamatrix", 2],
  ] as const)("when the camera sees a %s label of a demo slab, then the slab opens as if its id had been typed", async (_name, code, offset) => {
    const slabId = demoSlabId(offset);
    const { browser, page, errors } = await yardWithCamera(await cameraShowing(code, slabId));
    try {
      const scan = page.getByRole("button", { name: "Scan", exact: true });
      // A big target for a gloved finger, level with the field.
      const box = (await scan.boundingBox())!;
      expect(box.height).toBeGreaterThanOrEqual(48);
      const field = (await page.getByLabel(/Slab id or heat number/).boundingBox())!;
      expect(Math.abs(box.y - field.y)).toBeLessThan(4);
      if (code === "code128") await snap(page, "yard-scan-button-tablet");

      await scan.click();
      await page.getByTestId("scan-sheet").waitFor();
      await page.waitForURL(new RegExp(`/yard/slabs/${slabId}$`), { timeout: 30_000 });
      await page.getByRole("heading", { level: 1, name: `Slab ${slabId}` }).waitFor();
      expect(await page.getByTestId("scan-sheet").count()).toBe(0);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when the scanned id is not a slab, then it stands in the field and the finder says nothing matches", async () => {
    const { browser, page, errors } = await yardWithCamera(await cameraShowing("code128", "ZZ999999-999"));
    try {
      await page.getByRole("button", { name: "Scan", exact: true }).click();
      await page.getByText('No slab with an id starting "ZZ999999-999".').waitFor({ timeout: 30_000 });
      expect(await page.getByLabel(/Slab id or heat number/).inputValue()).toBe("ZZ999999-999");
      // Said once: not again underneath as "no slab matches" (once the finder's own search has answered too).
      await page.waitForLoadState("networkidle");
      expect(await page.getByText("No slab matches").count()).toBe(0);
      expect(await page.getByTestId("scan-sheet").count()).toBe(0);
      expect(new URL(page.url()).pathname).toBe("/yard");
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when the label holds something other than a slab id, then the sheet says so, keeps the camera on and can be closed", async () => {
    const url = "https://labels.example.test/batch/2026/04/17/pallet-000123456789";
    const { browser, page, errors } = await yardWithCamera(await cameraShowing("qrcode", url));
    try {
      const engine = await expectedEngine(page);
      await page.getByRole("button", { name: "Scan", exact: true }).click();
      const sheet = page.getByTestId("scan-sheet");
      await page.getByTestId("scan-not-slab").waitFor({ timeout: 30_000 });
      // Long texts are cut, with an ellipsis.
      expect(await page.getByTestId("scan-not-slab").textContent()).toBe(
        "Read “https://labels.example.test/batch/2026/04/17/pallet-00012…”, which is not a slab id. Point at the slab's own label.",
      );
      expect(await sheet.getAttribute("data-state")).toBe("looking");
      expect(await sheet.getAttribute("data-engine")).toBe(engine);
      // The live picture is playing from the (fake) rear camera.
      const video = await page
        .locator("[data-testid=scan-sheet] video")
        .evaluate((v: HTMLVideoElement) => ({ w: v.videoWidth, h: v.videoHeight, playing: !v.paused }));
      expect(video).toEqual({ w: 1280, h: 720, playing: true });
      await page.getByText("Scan only where the site's hot-yard and crane rules allow.").waitFor();
      // The sheet covers the screen: a picture of the screen, not of the whole scrolled page.
      await sheetSnap(page, "scan-sheet-tablet");
      await page.setViewportSize(DESKTOP);
      await sheetSnap(page, "scan-sheet-desktop");
      await page.setViewportSize(TABLET);

      await page.getByRole("button", { name: "Close" }).click();
      await sheet.waitFor({ state: "detached" });
      // Back on the field, ready for typing or the hand scanner; the camera is released.
      expect(await page.evaluate(() => document.activeElement?.id)).toBe("slab-finder");
      expect(await page.locator("video").count()).toBe(0);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when the tablet is offline, then the camera still reads labels (the reader's code is kept on the tablet)", async () => {
    const text = "PALLET 000123456789 / HALL 3 / ROW 14 / NOT A SLAB LABEL AT ALL";
    const { browser, page, errors } = await yardWithCamera(await cameraShowing("qrcode", text));
    try {
      // The service worker has stored the app, the reader's code included.
      await page.waitForFunction(() => navigator.serviceWorker?.controller != null, null, { timeout: 60_000 });
      await page.context().setOffline(true);
      await page.getByRole("button", { name: "Scan", exact: true }).click();
      await page.getByTestId("scan-not-slab").waitFor({ timeout: 30_000 });
      expect(await page.getByTestId("scan-not-slab").textContent()).toContain("Read “PALLET 000123456789 / HALL 3 / ROW 14 / NOT A SLAB LABEL…”");
      await sheetSnap(page, "scan-sheet-offline-tablet");
      await page.getByRole("button", { name: "Close" }).click();
      await page.getByTestId("scan-sheet").waitFor({ state: "detached" });
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when the camera is refused, then the sheet says how to allow it and that typing still works", async () => {
    const { browser, page, errors } = await yardWithCamera(["--use-fake-device-for-media-stream", "--deny-permission-prompts"]);
    try {
      await page.getByRole("button", { name: "Scan", exact: true }).click();
      const problem = page.getByTestId("scan-problem");
      await problem.waitFor();
      expect(await problem.getAttribute("data-problem")).toBe("refused");
      expect(await problem.textContent()).toContain(
        "The camera was refused. To scan with it, allow the camera for Strandsight in the browser's site settings, then tap Try again.",
      );
      await sheetSnap(page, "scan-refused-tablet");
      await page.getByRole("button", { name: "Type the id instead" }).click();
      await page.getByTestId("scan-sheet").waitFor({ state: "detached" });
      expect(await page.evaluate(() => document.activeElement?.id)).toBe("slab-finder");
      // The browser logs the refused getUserMedia as nothing; the page throws nothing.
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when the device has no camera, then the sheet says so and offers typing", async () => {
    // Chromium on this server without the fake device: no camera at all.
    const { browser, page, errors } = await yardWithCamera(["--use-fake-ui-for-media-stream"]);
    try {
      await page.getByRole("button", { name: "Scan", exact: true }).click();
      const problem = page.getByTestId("scan-problem");
      await problem.waitFor();
      expect(await problem.getAttribute("data-problem")).toBe("absent");
      expect(await problem.textContent()).toContain("No camera was found on this device. Type the id or use the hand scanner.");
      expect(await page.getByRole("button", { name: "Try again" }).count()).toBe(0);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it("when a hand scanner types the id and Enter, then the slab opens", async () => {
    const slabId = demoSlabId(3);
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await page.waitForURL(/\/yard$/);
    const field = page.getByLabel(/Slab id or heat number/);
    await field.waitFor();
    expect(await page.evaluate(() => document.activeElement?.id)).toBe("slab-finder");
    // A keyboard wedge types as fast as keys can go, then Enter, faster than the search's debounce.
    await page.keyboard.type(slabId);
    await page.keyboard.press("Enter");
    await page.waitForURL(new RegExp(`/yard/slabs/${slabId}$`));
    await page.getByRole("heading", { level: 1, name: `Slab ${slabId}` }).waitFor();
    expect(errors).toEqual([]);
    await context.close();
  });
});
