import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { StudyCell } from "./pages/study-cell";
import { keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;

async function noSidewaysScroll(page: Page) {
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
}

test("an analyst runs a load-mass study of the crane's rope tension and opens its worst run", async ({ page }) => {
  test.setTimeout(300_000);
  await page.setViewportSize({ width: 1280, height: 900 });
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  await new DashboardPage(page).openTeam(demoTeam.name);
  await page.getByRole("link", { name: "Gantry crane: hoist rope tension during a load swing" }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await notebook.waitUntilEditable();

  const study = new StudyCell(page);
  await study.add();
  // The load mass ±5 % around the rated 2000 kg: 1900, 2000 and 2100 kg.
  await study.addGridParameter("m");
  await expect(study.cell.getByLabel(/^Values/)).toHaveValue("1900, 2000, 2100");
  // Released from rest at 0.15 rad on the 6.5 m rope, like the demo's simulation.
  await study.cell.getByLabel("xl(t₀)").fill("0.9713");
  await study.cell.getByLabel("yl(t₀)").fill("-6.4269");
  await study.cell.getByLabel("End time (s)").fill("3");
  await study.cell.getByRole("checkbox", { name: /rope_tension/ }).check();
  await expect(study.cell.getByTestId("study-run-count")).toContainText("Total runs: 3");
  await notebook.waitUntilSaved();

  await study.run();
  await expect(study.summary()).toContainText("Completed", { timeout: 180_000 });
  await expect(study.cell.getByTestId("study-run-row")).toHaveCount(3);

  // The heaviest load pulls hardest. Released at θ0 = 0.15 rad with the trolley free (M = 850 kg), momentum and
  // energy give the tension at the bottom of the swing as m g [1 + 2(1 − cos θ0)(1 + m/M)] ≈ 22 200 N for
  // m = 2100 kg (fact of the trade; the demo notebook's note gives the same formula); the drive's resistance takes a little off.
  const worst = study.worstRow("rope_tension");
  await expect(worst).toContainText("m = 2100");
  const peak = Number((await worst.locator("td").nth(1).textContent())!.replace(/[^0-9.eE+-]/g, ""));
  expect(peak).toBeGreaterThan(21_600);
  expect(peak).toBeLessThan(22_300);
  await expect(study.cell.getByTestId("study-load-caution")).toContainText("qualified engineer");
  await expect(study.cell.getByTestId("study-envelope-rope_tension").locator("canvas").first()).toBeVisible();

  // Sorting by keyboard: the heading's button takes Enter.
  const peakHeading = study.cell.getByRole("button", { name: /peak rope_tension/ });
  await peakHeading.focus();
  await page.keyboard.press("Enter");
  await page.keyboard.press("Enter");
  await expect(study.cell.locator("th[aria-sort='descending']")).toContainText("rope_tension");
  await expect(study.cell.getByTestId("study-run-row").first()).toContainText("2100");

  const csvHref = await study.cell.getByTestId("study-csv").getAttribute("href");
  const csv = await page.request.get(csvHref!);
  expect(csv.status()).toBe(200);
  expect(await csv.text()).toContain("rope_tension");

  await noSidewaysScroll(page);
  await study.cell.getByTestId("study-results").scrollIntoViewIfNeeded();
  await keepScreenshot(page, "study-results-desktop");

  // One click from the worst case to the whole run, shown like any server run.
  await worst.getByRole("button", { name: /Open the worst run/ }).click();
  const opened = study.cell.getByTestId("study-opened-run");
  await expect(opened).toBeVisible({ timeout: 90_000 });
  await expect(opened.getByTestId("peak-row").filter({ hasText: "rope_tension" })).toBeVisible();

  await page.setViewportSize({ width: 390, height: 844 });
  await noSidewaysScroll(page);
  await study.cell.getByTestId("study-settings").scrollIntoViewIfNeeded();
  await keepScreenshot(page, "study-settings-390");
  await study.cell.getByTestId("study-runs-table").scrollIntoViewIfNeeded();
  await keepScreenshot(page, "study-results-390");
});
