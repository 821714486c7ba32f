import { expect, test } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { artifactsDir, keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;

test.beforeEach(async ({ page }) => {
  const signInPage = new SignInPage(page);
  await signInPage.goto();
  await signInPage.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
});

test("a double click on Create makes one derivation; a deleted one waits in the trash", async ({ page }) => {
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  const title = `Trolley sway damper trial ${Date.now().toString(36)}`;

  await page.getByRole("button", { name: "New derivation" }).click();
  const dialog = page.getByRole("dialog", { name: "New derivation" });
  await dialog.getByLabel("Title", { exact: true }).fill(title);
  await dialog.getByRole("button", { name: "Create" }).dblclick();
  await expect(page).toHaveURL(/\/derivations\/[0-9a-f-]{36}$/);

  await dashboard.openTeam(demoTeam.name);
  await dashboard.search(title);
  const total = page.getByTestId("derivations-total");
  await expect(total).toHaveText("1–1 of 1");
  await expect(dashboard.table.getByRole("link", { name: title })).toHaveCount(1);

  // Delete, then undo from the notice.
  await dashboard.table.getByRole("button", { name: `Delete ${title}` }).click();
  const confirm = page.getByRole("dialog", { name: "Delete derivation" });
  await expect(confirm).toContainText("trash");
  await confirm.getByRole("button", { name: "Move to trash" }).click();
  await expect(page.getByTestId("trashed-notice")).toContainText(title);
  await expect(total).toHaveText("No derivations");
  await expect(dashboard.table.getByRole("link", { name: title })).toHaveCount(0);
  await page.getByTestId("trashed-notice").getByRole("button", { name: "Undo" }).click();
  await expect(dashboard.table.getByRole("link", { name: title })).toHaveCount(1);

  // Delete again, and restore it from the trash.
  await dashboard.table.getByRole("button", { name: `Delete ${title}` }).click();
  await page.getByRole("dialog", { name: "Delete derivation" }).getByRole("button", { name: "Move to trash" }).click();
  await expect(dashboard.table.getByRole("link", { name: title })).toHaveCount(0);
  await page.getByTestId("trash-panel").getByRole("button", { name: /Trash/ }).click();
  const trash = page.getByTestId("trash-table");
  await expect(trash).toContainText(title);
  await expect(trash).toContainText("30 days left");
  await keepScreenshot(page, "dashboard-trash");
  await trash.getByRole("button", { name: `Restore ${title}` }).click();
  await expect(dashboard.table.getByRole("link", { name: title })).toHaveCount(1);
  await expect(trash).not.toContainText(title);
});

test("a notebook archive brings the whole notebook back in a new derivation", async ({ page }) => {
  const dashboard = new DashboardPage(page);
  const notebook = new NotebookPage(page);
  // A notebook of this test's own (the demo derivations stay as the other suites expect them).
  const title = `Trolley archive trip ${Date.now().toString(36)}`;
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(title, "Cart with pendulum");
  await notebook.expectOpen();
  const cells = await notebook.cellIds();
  expect(cells.length).toBeGreaterThan(5);
  const sourceId = notebook.id;

  const download = await notebook.export("Notebook archive (.notebook.zip)");
  expect(download.suggestedFilename()).toMatch(/^trolley-archive-trip-[a-z0-9]+\.notebook\.zip$/);
  const archivePath = `${artifactsDir}/trolley-archive-trip.notebook.zip`;
  await download.saveAs(archivePath);
  await page.keyboard.press("Escape");

  await dashboard.openTeam(demoTeam.name);
  await dashboard.importModelFile(archivePath);
  expect(notebook.id).not.toBe(sourceId);
  // The same cells, generated cells and their settings included, in the same order.
  expect(await notebook.cellIds()).toEqual(cells);
  await keepScreenshot(page, "notebook-archive-imported");

  await dashboard.openTeam(demoTeam.name);
  await dashboard.search(title);
  await expect(page.getByTestId("derivations-total")).toHaveText("1–2 of 2");
});
