/**
 * A real society's first start in a real browser (issue 11's "done when"): DEMO off, the
 * setup link, sign-in, inviting a member (the link read from the outbox, as an admin with
 * no outgoing mail server would), accepting, a role change, the last-admin rule, a
 * non-admin on an admin page, and a password change. Needs `npm run build` first.
 */
import fs from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startMailer } from "../../server/features/mail/service";
import { prepareSetupToken, setupLink } from "../../server/features/setup/service";
import { setupTokenPath } from "../../server/features/setup/token";
import { startTestApp, type TestApp } from "../support/testApp";
import { AccountPage, InvitePage, OutboxPage, SetupPage } from "./pages/AccountPages";
import { ARTIFACTS, chromiumAvailable, openBrowser } from "./pages/browser";
import { LoginPage } from "./pages/LoginPage";
import { MembersPage } from "./pages/MembersPage";

const built = fs.existsSync(path.resolve("dist/index.html"));
const SOCIETY = "Wrenfold Valley Garden Railway Club";
const ADMIN = { name: "Ada Wrenfold", email: "ada@wrenfold.example", password: "first-admin-password" };
const INVITEE = { name: "Kit Kestrel", email: "kit@wrenfold.example", password: "invited-signaller-pw" };

describe.skipIf(!built || !chromiumAvailable())("a real society's first start in the browser", () => {
  let t: TestApp;
  let dataDir: string;
  let server: http.Server;
  let baseUrl: string;
  let adminBrowser: Awaited<ReturnType<typeof openBrowser>>;
  let memberBrowser: Awaited<ReturnType<typeof openBrowser>>;
  let admin: Page;
  let member: Page;

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-e2e-accounts-"));
    t = await startTestApp({ demo: false, config: { serveClient: true, dataDir } });
    t.deps.mail = await startMailer(t.deps);
    server = http.createServer(t.app);
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    // Links in mail use the configured address, so it must be the one listening.
    t.deps.config.port = (server.address() as AddressInfo).port;
    baseUrl = `http://127.0.0.1:${t.deps.config.port}`;
    adminBrowser = await openBrowser();
    memberBrowser = await openBrowser();
    admin = await adminBrowser.context.newPage();
    member = await memberBrowser.context.newPage();
  });

  afterAll(async () => {
    await adminBrowser?.close();
    await memberBrowser?.close();
    server?.closeAllConnections();
    await new Promise<void>((resolve) => (server ? server.close(() => resolve()) : resolve()));
    await t?.deps.mail?.close();
    await t?.close();
    if (dataDir) fs.rmSync(dataDir, { recursive: true, force: true });
  });

  it("sets up the society from the printed link, with the password rule shown before any mistake", async () => {
    const token = await prepareSetupToken(t.deps);
    expect(token).not.toBeNull();
    const setup = new SetupPage(admin);
    await setup.open(setupLink(baseUrl, token!));
    expect(await setup.passwordRule().isVisible()).toBe(true);
    await setup.fill({ society: SOCIETY, name: ADMIN.name, email: ADMIN.email, password: "short" });
    await setup.submit();
    await setup.fieldError("use at least 10 characters").waitFor();
    await setup.fill({ society: SOCIETY, name: ADMIN.name, email: ADMIN.email, password: ADMIN.password });
    await setup.submit();
    await setup.done().waitFor();
    await admin.screenshot({ path: path.join(ARTIFACTS, "setup-done.png"), fullPage: true });
    expect(fs.existsSync(setupTokenPath(dataDir))).toBe(false);

    // The same link a second time says it is done, and offers sign-in.
    await admin.goto(setupLink(baseUrl, token!));
    await admin.getByText("This install is set up already.").waitFor();
  });

  it("signs in as the first admin, with the society's name in the header", async () => {
    await new LoginPage(admin, baseUrl).signIn(ADMIN.email, ADMIN.password);
    await admin.locator("header [data-society]").waitFor();
    expect(await admin.locator("header [data-society]").textContent()).toBe(SOCIETY);
  });

  it("invites a member, who accepts from the link in the outbox and signs in", async () => {
    await admin.goto(`${baseUrl}/admin/members`);
    await new MembersPage(admin).invite(INVITEE.email, "signaller");
    const link = await new OutboxPage(admin, baseUrl).linkIn(INVITEE.email, "/invite/");
    expect(link.startsWith(`${baseUrl}/invite/`)).toBe(true);

    await new InvitePage(member).accept(link, INVITEE.name, INVITEE.password);
    await new LoginPage(member, baseUrl).signIn(INVITEE.email, INVITEE.password);
    await member.getByRole("link", { name: INVITEE.name }).waitFor();
  });

  it("a non-admin on an admin page sees that it is for admins, and nothing of the form", async () => {
    await member.goto(`${baseUrl}/admin/members`);
    await member.getByRole("heading", { name: "This page is for admins" }).waitFor();
    expect(await member.locator("main input, main select, main textarea").count()).toBe(0);
    expect(await member.getByRole("button", { name: "Send invitation" }).count()).toBe(0);
    await member.screenshot({ path: path.join(ARTIFACTS, "admin-page-for-admins.png"), fullPage: true });
  });

  it("changes the member's role, and refuses to demote the last admin, saying so plainly", async () => {
    const members = new MembersPage(admin);
    await admin.goto(`${baseUrl}/admin/members`);
    await members.setRole(INVITEE.name, "maintainer");
    await expect.poll(async () => (await t.deps.db.models.User.findOne({ where: { email: INVITEE.email } }))?.role).toBe("maintainer");
    await member.goto(`${baseUrl}/account`);
    await member.getByText(/Signed in as .*maintainer/).waitFor();

    await members.setRole(ADMIN.name, "viewer");
    await members.alert().filter({ hasText: "last admin" }).waitFor();
    expect(await members.alert().textContent()).toContain(`${ADMIN.name} is the society's last admin and cannot be demoted`);
    await expect.poll(async () => members.roleOf(ADMIN.name).inputValue()).toBe("admin");
    await admin.screenshot({ path: path.join(ARTIFACTS, "members-page.png"), fullPage: true });
  });

  it("changes the admin's password: this browser stays signed in and the new password works", async () => {
    const account = new AccountPage(admin, baseUrl);
    await account.open();
    await account.changePassword(ADMIN.password, "second-admin-password");
    await account.message().filter({ hasText: "Password changed" }).waitFor();
    await admin.reload();
    await admin.getByRole("heading", { name: "Your account" }).waitFor();

    await admin.getByRole("button", { name: "Sign out" }).click();
    await admin.waitForURL((url) => url.pathname.startsWith("/login"));
    await new LoginPage(admin, baseUrl).signIn(ADMIN.email, "second-admin-password");
    await admin.getByRole("link", { name: ADMIN.name }).waitFor();
  });
});
