import { expect, test } from "@playwright/test";
import { SignInPage } from "./pages/sign-in-page";
import { keepScreenshot, uniqueEmail } from "./support";

test("sign up, sign out and sign in again", async ({ page }) => {
  const email = uniqueEmail("newcomer");
  const password = "a-long-enough-password";

  await page.goto("/sign-up");
  // Invalid input first: field errors appear and nothing typed is lost.
  await page.getByLabel("Name").fill("Mara Lindqvist");
  await page.getByLabel("E-mail").fill("not-an-address");
  await page.getByLabel("Password").fill("short");
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByText("Enter a valid e-mail address.")).toBeVisible();
  await expect(page.getByText("Use at least 10 characters.")).toBeVisible();
  await expect(page.getByLabel("Name")).toHaveValue("Mara Lindqvist");
  await keepScreenshot(page, "sign-up-field-errors");

  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page).toHaveURL(/\/teams$/);
  await expect(page.getByTestId("signed-in-user")).toHaveText("Mara Lindqvist");
  await expect(page.getByText("You are not in a team yet.")).toBeVisible();

  const signInPage = new SignInPage(page);
  await signInPage.signOut();
  await page.goto("/teams");
  await expect(page).toHaveURL(/\/sign-in\?callbackUrl=%2Fteams/);

  await signInPage.signIn(email, "the-wrong-password");
  await expect(page.getByRole("form", { name: "Sign in" }).getByRole("alert")).toHaveText("That e-mail and password do not match an account.");
  await keepScreenshot(page, "sign-in-wrong-password");

  await signInPage.signIn(email, password);
  await expect(page).toHaveURL(/\/teams$/);
  await expect(page.getByTestId("signed-in-user")).toHaveText("Mara Lindqvist");
});

test("the same generic message for an unknown e-mail", async ({ page }) => {
  const signInPage = new SignInPage(page);
  await signInPage.goto();
  await signInPage.signIn(uniqueEmail("nobody"), "whatever-password");
  await expect(page.getByRole("form", { name: "Sign in" }).getByRole("alert")).toHaveText("That e-mail and password do not match an account.");
});
