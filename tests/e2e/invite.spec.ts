import { expect, test } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { MailboxPage } from "./pages/mailbox-page";
import { SignInPage } from "./pages/sign-in-page";
import { keepScreenshot, uniqueEmail } from "./support";

const lead = demoUsers.find((user) => user.role === "lead")!;

test("a lead invites a colleague who accepts and lands in the team", async ({ page, browser }) => {
  const colleague = uniqueEmail("colleague");

  const signInPage = new SignInPage(page);
  await signInPage.goto();
  await signInPage.signIn(lead.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  await page.getByRole("link", { name: new RegExp(demoTeam.name) }).click();
  await page.getByRole("link", { name: "Members and invitations" }).click();

  const inviteForm = page.getByRole("form", { name: "Invite by e-mail" });
  await inviteForm.getByLabel("E-mail").fill(colleague);
  await inviteForm.getByLabel("Role").selectOption("analyst");
  await inviteForm.getByRole("button", { name: "Send invitation" }).click();
  await expect(page.getByText(`Invitation sent to ${colleague}.`)).toBeVisible();
  await expect(page.getByTestId("open-invites")).toContainText(colleague);
  await keepScreenshot(page, "team-settings-invited");

  // The colleague, in a separate browser session, finds the mail and accepts.
  const context = await browser.newContext();
  const colleaguePage = await context.newPage();
  const mailbox = new MailboxPage(colleaguePage);
  await mailbox.openMessageTo(colleague, /invited you to Kestrel/);
  await keepScreenshot(colleaguePage, "mailbox-invitation");
  const inviteLink = await mailbox.linkHref(/\/invite\//);
  await colleaguePage.goto(inviteLink);
  await expect(colleaguePage.getByRole("heading", { name: `Join ${demoTeam.name}` })).toBeVisible();
  await colleaguePage.getByRole("link", { name: "Create an account and join" }).click();

  await expect(colleaguePage.getByLabel("E-mail")).toHaveValue(colleague);
  await colleaguePage.getByLabel("Name").fill("Oskar Brandt");
  await colleaguePage.getByLabel("Password").fill("oskars-long-password");
  await colleaguePage.getByRole("button", { name: "Create account and join" }).click();

  await expect(colleaguePage).toHaveURL(/\/teams\/[0-9a-f-]{36}$/);
  await expect(colleaguePage.getByTestId("team-name")).toHaveText(demoTeam.name);
  await expect(colleaguePage.getByTestId("my-role")).toHaveText("analyst");
  await expect(colleaguePage.getByRole("button", { name: "New derivation" })).toBeVisible();
  await keepScreenshot(colleaguePage, "colleague-joined-team");

  // The link is spent: opening it again shows the clear "already used" page.
  await colleaguePage.goto(inviteLink);
  await expect(colleaguePage.getByTestId("invite-unavailable")).toContainText("already been used");
  await keepScreenshot(colleaguePage, "invite-already-used");
  await context.close();
});
