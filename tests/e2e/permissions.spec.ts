import { expect, test } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { SignInPage } from "./pages/sign-in-page";
import { keepScreenshot } from "./support";

const viewer = demoUsers.find((user) => user.role === "viewer")!;

test("a viewer is refused an analyst action in the UI and at the API", async ({ page, request }) => {
  const signInPage = new SignInPage(page);
  await signInPage.goto();
  await signInPage.signIn(viewer.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  await page.getByRole("link", { name: new RegExp(demoTeam.name) }).click();
  await expect(page.getByTestId("my-role")).toHaveText("viewer");

  // UI: the derivations are readable, but creating, renaming and deleting are not offered.
  const table = page.getByTestId("derivations-table");
  await expect(table.getByRole("link").first()).toBeVisible();
  await expect(page.getByRole("button", { name: "New derivation" })).toHaveCount(0);
  await expect(table.getByRole("button", { name: /^Rename / })).toHaveCount(0);
  await expect(table.getByRole("button", { name: /^Delete / })).toHaveCount(0);
  await expect(page.getByTestId("read-only-note")).toContainText("As viewer you can read");
  await page.keyboard.press("n");
  await expect(page.getByRole("dialog")).toHaveCount(0);
  await keepScreenshot(page, "viewer-dashboard");

  // API: the same action with the viewer's session is refused with 403.
  const teamId = page.url().split("/teams/")[1];
  const response = await page.request.post(`/api/teams/${teamId}/derivations`, { data: { title: "Viewer tries to create" } });
  expect(response.status()).toBe(403);
  expect(await response.json()).toMatchObject({ error: { code: "forbidden:derivation" } });

  // And without any session the API answers 401 JSON.
  const anonymous = await request.get(`/api/teams/${teamId}/derivations`);
  expect(anonymous.status()).toBe(401);
  expect((await anonymous.json()).error.code).toBe("unauthorized:session");
});

test("the help dialog lists the keyboard shortcuts", async ({ page }) => {
  await page.goto("/sign-in");
  await page.locator("body").click();
  await page.keyboard.press("?");
  await expect(page.getByRole("dialog", { name: "Keyboard shortcuts" })).toBeVisible();
  await expect(page.getByTestId("shortcut-list")).toContainText("Switch between light and dark theme");
  await page.keyboard.press("Escape");
  await expect(page.getByRole("dialog")).toHaveCount(0);
});
