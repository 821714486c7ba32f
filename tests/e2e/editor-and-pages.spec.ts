import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { MembersPage } from "./pages/members-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { artifactsDir, keepScreenshot, uniqueEmail } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;
const lead = demoUsers.find((user) => user.role === "lead")!;

test.describe.configure({ timeout: 180_000 });

const DESKTOP = { width: 1280, height: 800 };
const PHONE = { width: 390, height: 844 };

async function signIn(page: Page, email: string): Promise<void> {
  const signInPage = new SignInPage(page);
  await signInPage.goto();
  await signInPage.signIn(email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
}

/** How far the page itself scrolls sideways (0 when everything wide scrolls inside its own box). */
function pageOverflow(page: Page): Promise<number> {
  return page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
}

test("after '+ Add', typing goes into the new row and fires no shortcut", async ({ page }) => {
  await page.setViewportSize(DESKTOP);
  await signIn(page, analyst.email);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Luffing jib study ${Date.now().toString(36)}`);
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();

  // A blank notebook opens quietly, and the header's switcher names the derivation's team.
  await expect(page.getByTestId("evaluation-status")).toHaveAttribute("data-state", "none");
  await expect(page.getByText("expression is empty")).toHaveCount(0);
  await expect(page.getByRole("combobox", { name: "Switch team" }).locator("option:checked")).toHaveText(new RegExp(demoTeam.name));
  await expect(page.getByRole("heading", { level: 1 })).toHaveCount(1);

  let downloads = 0;
  page.on("download", () => downloads++);
  const themeBefore = await page.locator("html").getAttribute("data-theme");

  await page.getByRole("button", { name: "+ Add coordinate" }).click();
  const name = page.getByRole("textbox", { name: "Name, coordinate 1", exact: true });
  await expect(name).toBeFocused();
  // θ typed as a name is read as the name it renders.
  await page.keyboard.type("θ");
  await expect(name).toHaveValue("theta");
  await page.keyboard.press("Tab");
  await page.keyboard.type("rad");
  await page.keyboard.press("Tab");
  await page.keyboard.type("luffing angle, x and t measured from the jib foot");
  await expect(page.getByRole("textbox", { name: "Description, coordinate 1" })).toHaveValue("luffing angle, x and t measured from the jib foot");

  // The same keys with the focus on a button still do nothing.
  await page.getByRole("button", { name: "+ Add parameter" }).focus();
  await page.keyboard.press("Escape");
  await page.getByRole("button", { name: "+ Add parameter" }).focus();
  await page.keyboard.type("xt");
  expect(downloads).toBe(0);
  expect(await page.locator("html").getAttribute("data-theme")).toBe(themeBefore);
  await keepScreenshot(page, "editor-after-add-desktop");

  await page.setViewportSize(PHONE);
  await page.getByRole("button", { name: "+ Add parameter" }).click();
  await expect(page.getByRole("textbox", { name: "Name, parameter 1", exact: true })).toBeFocused();
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "editor-after-add-phone");
});

test("at 390 px, the notebook's equations and tables scroll inside their boxes, never the page", async ({ page }) => {
  await page.setViewportSize(PHONE);
  await signIn(page, analyst.email);
  await page.getByRole("link", { name: new RegExp(demoTeam.name) }).click();
  await expect(page.getByTestId("team-name")).toHaveText(demoTeam.name);
  await expect(page.getByTestId("derivations-table")).toBeVisible();
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "dashboard-phone");

  // The approved crane model: locked for an analyst, and the lock banner says so (in place of the read-only note).
  await page.getByRole("link", { name: "Gantry crane: trolley with swinging load" }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await expect(page.getByTestId("read-only-badge")).toHaveAttribute("data-reason", "approved");
  await expect(page.getByTestId("lock-banner")).toContainText("Approved and locked");
  await expect(page.getByTestId("read-only-note")).toHaveCount(0);
  await notebook.evaluate();
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "notebook-approved-phone");

  await page.setViewportSize(DESKTOP);
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "notebook-approved-desktop");

  // Measured data: file inputs in the house style, each with its limit stated.
  await page.goto("/teams");
  await page.getByRole("link", { name: new RegExp(demoTeam.name) }).click();
  // The seat rig's draft (the gimbal under review stays as the reviewer's test expects it: no simulation cell).
  await page.getByRole("link", { name: "Seat-suspension rig: single mass on spring and damper" }).click();
  await notebook.expectOpen();
  await page.getByRole("button", { name: "Add cell", exact: true }).click();
  await page.getByRole("group", { name: "Cell kinds" }).getByRole("button", { name: "Simulation" }).click();
  await notebook.evaluate();
  const measured = page.getByTestId("measured-panel");
  await measured.scrollIntoViewIfNeeded();
  await measured.locator("summary").click();
  await expect(measured.getByTestId("file-limit").first()).toHaveText("CSV, up to 10 MB.");
  await measured.scrollIntoViewIfNeeded();
  await page.screenshot({ path: `${artifactsDir}/measured-panel-desktop.png` });
  await page.setViewportSize(PHONE);
  await measured.scrollIntoViewIfNeeded();
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await page.screenshot({ path: `${artifactsDir}/measured-panel-phone.png` });
});

test("a model file over the limit is refused in the browser, before it is sent", async ({ page }) => {
  await page.setViewportSize(PHONE);
  await signIn(page, analyst.email);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  const bigPath = `${artifactsDir}/too-large.model.json`;
  await import("node:fs/promises").then((fs) => fs.writeFile(bigPath, `{"title": "${"x".repeat(600_000)}"}`));
  let importRequests = 0;
  page.on("request", (request) => {
    if (request.url().includes("/derivations/import")) importRequests++;
  });
  await page.getByRole("button", { name: "Import" }).click();
  const dialog = page.getByRole("dialog", { name: "Import a model file" });
  await expect(dialog.getByTestId("file-limit")).toHaveText("A .model.json file up to 488 kB, or a .notebook.zip archive, up to 50 MB.");
  await dialog.getByLabel("Model file").setInputFiles(bigPath);
  await expect(dialog.getByTestId("import-error")).toContainText('The file "too-large.model.json" is 586 kB; the limit is 488 kB. Nothing was sent.');
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await page.screenshot({ path: `${artifactsDir}/import-too-large-phone.png` });
  await page.setViewportSize(DESKTOP);
  await page.screenshot({ path: `${artifactsDir}/import-too-large-desktop.png` });
  // The refused file was cleared: Import asks for a file and still sends nothing.
  await dialog.getByRole("button", { name: "Import" }).click();
  await expect(dialog.getByTestId("import-error")).toContainText("Choose a .model.json or .notebook.zip file.");
  expect(importRequests).toBe(0);
});

test("a lead re-invites, then withdraws, and a missing page keeps the site header", async ({ page }) => {
  await page.setViewportSize(DESKTOP);
  await signIn(page, lead.email);
  const members = new MembersPage(page);
  await members.open(demoTeam.name);
  const contractor = uniqueEmail("contractor");
  await members.invite(contractor, "viewer");
  await members.invite(contractor, "reviewer");
  await expect(page.getByText("It replaces the earlier invitation")).toBeVisible();
  await expect(members.openInvites.filter({ hasText: contractor })).toHaveCount(1);
  await expect(members.openInvites.filter({ hasText: contractor })).toContainText("Reviewer");
  await keepScreenshot(page, "members-reinvited-desktop");
  await page.setViewportSize(PHONE);
  expect(await pageOverflow(page)).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "members-reinvited-phone");
  await members.withdraw(contractor);
  await expect(members.openInvites.filter({ hasText: contractor })).toHaveCount(0);

  // A derivation that does not exist: the 404 sits under the site header, with a way back.
  await page.goto("/derivations/00000000-0000-4000-8000-000000000000");
  await expect(page.getByTestId("not-found")).toBeVisible();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
  await keepScreenshot(page, "not-found-phone");
  await page.setViewportSize(DESKTOP);
  await page.goto("/no-such-page");
  await expect(page.getByTestId("not-found")).toBeVisible();
  await expect(page.getByRole("combobox", { name: "Switch team" })).toBeVisible();
  await keepScreenshot(page, "not-found-desktop");

  // The skip link is the first stop of the keyboard and leads to the page's content.
  await page.keyboard.press("Tab");
  const skip = page.getByRole("link", { name: "Skip to content" });
  await expect(skip).toBeFocused();
  await page.keyboard.press("Enter");
  await expect(page.locator("main#main")).toBeFocused();
});
