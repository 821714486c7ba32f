import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { ComparePage, HistoryPage } from "./pages/history-page";
import { NotebookPage } from "./pages/notebook-page";
import { NotificationsMenu } from "./pages/notifications-menu";
import { ReportPage } from "./pages/report-page";
import { ReviewPanel } from "./pages/review-panel";
import { SignInPage } from "./pages/sign-in-page";
import { keepScreenshot } from "./support";

const user = (role: "lead" | "analyst" | "reviewer") => demoUsers.find((candidate) => candidate.role === role)!;
const analyst = user("analyst");
const reviewer = user("reviewer");
const lead = user("lead");

test.describe.configure({ timeout: 300_000 });

async function signInAs(page: Page, person: { email: string }): Promise<void> {
  const signIn = new SignInPage(page);
  if (await page.getByRole("button", { name: "Sign out" }).isVisible()) await signIn.signOut();
  await signIn.goto();
  await signIn.signIn(person.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
}

/** Both widths the product is checked at: the page must never scroll sideways. */
async function screenshots(page: Page, name: string): Promise<void> {
  await keepScreenshot(page, name);
  await page.setViewportSize({ width: 390, height: 844 });
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow, `${name} scrolls sideways at 390 px`).toBeLessThanOrEqual(0);
  await keepScreenshot(page, `${name}-390`);
  await page.setViewportSize({ width: 1280, height: 800 });
}

test("review, approval, lock and unlock, then the comparison and the report", async ({ page }) => {
  await page.setViewportSize({ width: 1280, height: 800 });
  const notebook = new NotebookPage(page);
  const panel = new ReviewPanel(page);
  const notifications = new NotificationsMenu(page);
  const title = `Hook block review ${Date.now().toString(36)}`;

  // The analyst creates a derivation, edits it and asks the reviewer.
  await signInAs(page, analyst);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(title, "Single pendulum");
  await notebook.expectOpen();
  const id = notebook.id;
  await page.getByRole("textbox", { name: "Value, parameter 2", exact: true }).fill("4.2");
  await notebook.waitUntilSaved();
  await panel.expectStatus("draft");
  await panel.requestReview([reviewer.name], "Cable length set to the new hoist height.");
  const firstReview = await panel.reviewedRevision();
  await expect(page.getByTestId("reviewer")).toContainText(reviewer.name);

  // The reviewer is notified and requests changes.
  await signInAs(page, reviewer);
  await expect(page.getByTestId("unread-count")).toBeVisible();
  await notifications.open();
  await expect(notifications.entry(title)).toContainText(`${analyst.name} asked you to review revision ${firstReview}`);
  await keepScreenshot(page, "review-notifications");
  await notifications.follow(title);
  expect(notebook.id).toBe(id);
  await panel.expectStatus("in_review");
  await screenshots(page, "review-panel-reviewer");
  await panel.requestChanges("Include the hook block's own rotational inertia about the sheave.");

  // The analyst sees the request, fixes the model and asks again.
  await signInAs(page, analyst);
  await notifications.follow(new RegExp(`requested changes to "${title}"`));
  await expect(page.getByTestId("reviewer-comment")).toContainText("rotational inertia");
  await notebook.addRow("parameter", { Name: "J_h", Unit: "kg*m^2", Value: "12" });
  await page.getByRole("textbox", { name: "Kinetic energy T", exact: true }).click();
  await page.keyboard.press("ControlOrMeta+a");
  await page.keyboard.type("1/2*(m*l^2 + J_h)*theta'^2");
  await expect(page.locator('.cm-content[aria-label="Kinetic energy T"]')).toHaveText("1/2*(m*l^2 + J_h)*theta'^2");
  await notebook.waitUntilSaved();
  await panel.requestReview([reviewer.name]);
  const secondReview = await panel.reviewedRevision();
  expect(secondReview).toBeGreaterThan(firstReview);

  // The reviewer signs off.
  await signInAs(page, reviewer);
  await notifications.follow(new RegExp(`revision ${secondReview} of "${title}"`));
  await panel.signOff("Inertia term checked against the sheave drawing.");
  await expect(page.getByTestId("reviewer").filter({ hasText: reviewer.name })).toHaveAttribute("data-decision", "signed_off");

  // The lead, who changed nothing, approves: the derivation is locked at that revision.
  await signInAs(page, lead);
  await page.goto(`/derivations/${id}`);
  await notebook.expectOpen();
  await panel.approve(secondReview);
  await expect(panel.lockBanner).toContainText(`Approved and locked at revision ${secondReview} by ${lead.name}`);
  await expect(page.getByTestId("notebook-page")).toHaveAttribute("data-read-only", "true");

  // Editing is refused in the UI (read-only notebook) and at the API (423), for the lead too.
  await page.reload();
  await notebook.expectOpen();
  await expect(panel.lockBanner).toBeVisible();
  await expect(page.getByRole("textbox", { name: "Derivation title" })).toHaveCount(0);
  await expect(page.getByRole("button", { name: "+ Add parameter" })).toHaveCount(0);
  await screenshots(page, "locked-notebook");
  const refused = await page.request.patch(`/api/derivations/${id}`, { data: { title: "Edited while locked" } });
  expect(refused.status()).toBe(423);
  expect((await refused.json()).error.code).toBe("locked:derivation");

  // The lead unlocks with a reason, given in a dialog; a reason too short is refused there.
  const dialog = await panel.submitUnlock("later");
  await expect(dialog.getByRole("alert")).toContainText("at least 10 characters");
  await panel.submitUnlock("Sheave inertia to be confirmed by the supplier's data sheet.");
  await expect(panel.lockBanner).toHaveCount(0, { timeout: 20_000 });
  await panel.expectStatus("draft");
  await expect(page.getByRole("textbox", { name: "Derivation title" })).toBeVisible();

  // The history keeps both reviewed revisions and the approval with its unlock reason.
  await page.getByTestId("review-panel").getByRole("link", { name: "History" }).click();
  const history = new HistoryPage(page);
  await expect(page.getByRole("heading", { name: "History", level: 1 })).toBeVisible();
  await expect(history.revision(secondReview).getByTestId("revision-approval")).toContainText(`Approved by ${lead.name}`);
  await expect(history.revision(secondReview).getByTestId("revision-approval")).toContainText("supplier's data sheet");
  await screenshots(page, "history");

  // The comparison shows the change: the new parameter, the kinetic energy as text, the new term.
  await history.compare(firstReview, secondReview);
  const compare = new ComparePage(page);
  await expect(compare.parameterRow("J_h")).toHaveAttribute("data-status", "added");
  await expect(compare.cell("kinetic")).toHaveAttribute("data-status", "changed");
  await expect(compare.cell("kinetic").locator('[data-change="added"]')).toContainText("J_h");
  await compare.waitForEquations();
  // T = ½(m l² + J_h) θ'² adds J_h θ'' to the θ equation beside m l² θ'' (the moment of inertia of a point
  // mass about the pivot is m l², a rigid body adds its own about the same axis: fact of the trade).
  const added = compare.equation("theta").locator('[data-testid="term-change"][data-status="added"]');
  await expect(added).toHaveCount(1);
  await expect(added.locator("[title]")).toHaveAttribute("title", "J_h*theta''");
  await expect(compare.equation("theta").locator('[data-status="unchanged"]')).toHaveCount(2);
  await screenshots(page, "compare");

  // The report of the approved revision renders, with the approval block and the safety note.
  await history.goto(id);
  await history.openReport(secondReview);
  const report = new ReportPage(page);
  await report.expectRendered();
  await expect(page.getByTestId("report-revision")).toContainText(`${secondReview} —`);
  await expect(report.section("report-approval").getByTestId("report-approver")).toHaveText(lead.name);
  await expect(report.section("report-approval")).toContainText("supplier's data sheet");
  await expect(report.section("report-model")).toContainText("kg*m^2");
  await expect(report.section("report-equations").locator(".katex-display").first()).toBeVisible();
  await screenshots(page, "report");
  await page.emulateMedia({ media: "print" });
  await expect(page.getByRole("button", { name: "Print or save as PDF" })).toBeHidden();
  await expect(page.getByRole("banner")).toBeHidden();
  await keepScreenshot(page, "report-print");
});
