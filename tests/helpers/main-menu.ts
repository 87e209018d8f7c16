import type { Page } from "playwright-core";

/**
 * Opens a screen from the main menu as a person would: its link on the row, or, when the row shows
 * the menu by named groups (src/app/main-menu.tsx), the group that holds it first.
 */
export async function openFromMenu(page: Page, label: string) {
  const nav = page.getByRole("navigation", { name: "Main" });
  const onRow = nav.getByRole("link", { name: label, exact: true });
  if ((await onRow.count()) > 0) return onRow.click();
  const group = nav.locator("[data-menu-group]").filter({ has: page.getByRole("link", { name: label, exact: true, includeHidden: true }) });
  await group.getByRole("button").click();
  await group.getByRole("link", { name: label, exact: true }).click();
}
