import { mkdtempSync, readFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import nodemailer from "nodemailer";
import { beforeAll, describe, expect, it } from "vitest";
import { freePort } from "../test/free-port.ts";
import { mailMessageSchema } from "@jogwright/shared";
import { call, createHarness, createMailHarness, DEMO_BY_ROLE, signIn } from "../test/harness.ts";
import { createProfile, teamForFile } from "../test/profiles-fixture.ts";
import { startFakeSmtp, type FakeSmtp } from "./fake-smtp.ts";
import { listActiveWithRole } from "../modules/users/service.ts";

const cast = teamForFile(createMailHarness);
let admin: string;
beforeAll(async () => {
  admin = await signIn(cast.h, DEMO_BY_ROLE.admin);
});

const mailAbout = (smtp: FakeSmtp, name: string, subject: string) => smtp.messages.filter((m) => m.subject.includes(name) && m.subject.includes(subject));


describe("workflow mail through the fake SMTP server", () => {
  it("a submitted version is mailed to every active safety officer", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm);
    await call(cast.h, "post", `/api/versions/${profile.latestVersion.id}/submit`, cast.team.engineer.cookie).expect(200);
    await cast.h.ctx.mailer.settled();
    const [mail] = mailAbout(cast.h.smtp, profile.name, "Review requested");
    expect(mail).toBeDefined();
    const officers = (await listActiveWithRole(cast.h.db, "safety_officer")).map((o) => o.email);
    expect([...mail!.to].sort()).toEqual([...new Set(officers)].sort());
    expect(mail!.to).toEqual(expect.arrayContaining([cast.team.officer.email, cast.team.officer2.email, "sigrid@cell-b.example"]));
    expect(mail!.text).toContain(profile.latestVersion.paramsSha256);
  });

  it("an approval is mailed to the version's author and the profile's operator", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm);
    const v = profile.latestVersion;
    await call(cast.h, "post", `/api/versions/${v.id}/submit`, cast.team.engineer.cookie).expect(200);
    await call(cast.h, "post", `/api/versions/${v.id}/approve`, cast.team.officer.cookie).send({ comment: "Wrist trial is clean.", paramsSha256: v.paramsSha256 }).expect(200);
    await cast.h.ctx.mailer.settled();
    const [mail] = mailAbout(cast.h.smtp, profile.name, "Approved");
    expect([...mail!.to].sort()).toEqual([cast.team.engineer.email, cast.team.operator.email].sort());
    expect(mail!.text).toContain("Wrist trial is clean.");
  });

  it("a rejection is mailed to the version's author and the profile's operator with the reason", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm);
    const v = profile.latestVersion;
    await call(cast.h, "post", `/api/versions/${v.id}/submit`, cast.team.engineer.cookie).expect(200);
    await call(cast.h, "post", `/api/versions/${v.id}/reject`, cast.team.officer2.cookie).send({ reason: "Damping too low at the wrist." }).expect(200);
    await cast.h.ctx.mailer.settled();
    const [mail] = mailAbout(cast.h.smtp, profile.name, "Rejected");
    expect([...mail!.to].sort()).toEqual([cast.team.engineer.email, cast.team.operator.email].sort());
    expect(mail!.text).toContain("Damping too low at the wrist.");
  });

  it("admins read the outbox, newest first", async () => {
    const res = await call(cast.h, "get", "/api/mail", admin);
    expect(res.status).toBe(200);
    const messages = res.body.messages.map((m: unknown) => mailMessageSchema.parse(m));
    expect(messages.length).toBeGreaterThan(0);
    expect(messages[0].id).toBeGreaterThan(messages[messages.length - 1].id);
    expect(messages.find((m: { kind: string; status: string }) => m.kind === "version-approved")?.status).toBe("sent");
  });

  it("with the SMTP server down the workflow step still succeeds, the mail is kept as failed, and a retry sends it once the server is up", async () => {
    const port = await freePort();
    const down = createHarness({ SIGN_IN_MAX_FAILURES: "1000", SMTP_PORT: String(port) });
    let smtp: FakeSmtp | null = null;
    try {
      const profile = await createProfile(down, cast.team, cast.arm);
      const submitted = await call(down, "post", `/api/versions/${profile.latestVersion.id}/submit`, cast.team.engineer.cookie);
      expect(submitted.status).toBe(200);
      expect(submitted.body.version.state).toBe("submitted");
      await down.ctx.mailer.settled();
      const outbox = (await call(down, "get", "/api/mail", admin)).body.messages;
      const failed = outbox.find((m: { subject: string }) => m.subject.includes(profile.name));
      expect(failed).toMatchObject({ status: "failed", attempts: 1 });
      expect(failed.lastError).toMatch(/ECONNREFUSED|connect/i);

      smtp = await startFakeSmtp({ port, dir: null });
      const retried = await call(down, "post", `/api/mail/${failed.id}/retry`, admin);
      expect(retried.status).toBe(200);
      expect(retried.body.message).toMatchObject({ id: failed.id, status: "sent", attempts: 2, lastError: null });
      expect(smtp.messages.map((m) => m.subject)).toEqual([failed.subject]);
      expect((await call(down, "post", `/api/mail/${failed.id}/retry`, admin)).status).toBe(409);
    } finally {
      await down.close();
      await smtp?.close();
    }
  });

  it("the fake SMTP server keeps each message as an .eml file and in memory", async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), "jogwright-mail-"));
    const smtp = await startFakeSmtp({ port: 0, dir });
    try {
      const transport = nodemailer.createTransport({ host: "127.0.0.1", port: smtp.port, secure: false, ignoreTLS: true });
      await transport.sendMail({ from: "a@example.test", to: ["b@example.test", "c@example.test"], subject: "Test: stored", text: "hello" });
      const [stored] = await smtp.waitFor(1);
      expect(stored).toMatchObject({ to: ["b@example.test", "c@example.test"], subject: "Test: stored", text: "hello\n" });
      expect(readFileSync(stored!.file!, "utf8")).toContain("Subject: Test: stored");
    } finally {
      await smtp.close();
    }
  });
});
