import { randomBytes } from "node:crypto";
import { test as base, expect as playwrightExpect, request, type APIRequestContext } from "@playwright/test";
import { defaultProfileParams, type Arm, type ProfileParams, type Role } from "@jogwright/shared";
import { DEMO_PASSWORD } from "./browser.ts";

/**
 * What a browser test needs before its first click, made through the API as the seeded demo users
 * (adele creates people, emeka writes profiles, sigrid approves): every test makes its own, with unique
 * names, so no test depends on another having run first and tests may run at the same time.
 */

export interface Person {
  id: string;
  username: string;
  displayName: string;
  password: string;
}

export interface VersionRef {
  id: number;
  number: number;
  paramsSha256: string;
}

export interface ProfileRef {
  id: number;
  name: string;
  latestVersion: VersionRef;
}

/** A short unique tag for names: user names, display names and profile names of one test. */
export function uniqueTag(): string {
  return `${Date.now().toString(36)}${randomBytes(3).toString("hex")}`;
}

async function body<T>(response: Awaited<ReturnType<APIRequestContext["get"]>>, what: string): Promise<T> {
  if (!response.ok()) throw new Error(`${what}: ${response.status()} ${await response.text()}`);
  return (await response.json()) as T;
}

export class Setup {
  private readonly sessions = new Map<string, Promise<APIRequestContext>>();

  constructor(private readonly baseURL: string) {}

  /** An API session signed in as `username` (a demo account unless `password` is given). */
  as(username: string, password = DEMO_PASSWORD): Promise<APIRequestContext> {
    let session = this.sessions.get(username);
    if (!session) {
      session = (async () => {
        // State-changing requests must carry the console's Origin (the server's PUBLIC_ORIGIN). A connection
        // each request (`Connection: close`): a kept-alive one left idle past the server's keep-alive timeout
        // (5 s) may be closed by the server just as the next request goes out, and Playwright's request
        // context answers that with ECONNRESET where a browser retries (seen once in CI, 3 Dec 2026).
        const context = await request.newContext({ baseURL: this.baseURL, extraHTTPHeaders: { Origin: new URL(this.baseURL).origin, Connection: "close" } });
        await body(await context.post("/api/auth/sign-in", { data: { username, password } }), `sign-in as ${username}`);
        return context;
      })();
      this.sessions.set(username, session);
    }
    return session;
  }

  /** A new active account with `roles`, created by the demo admin. */
  async person(roles: Role[], label = roles.join(" ")): Promise<Person> {
    const tag = uniqueTag();
    const username = `e2e-${tag}`;
    const displayName = `E2E ${label} ${tag}`;
    const password = `e2e-pass-${tag}`;
    const admin = await this.as("adele");
    const { user } = await body<{ user: { id: string } }>(
      await admin.post("/api/users", { data: { username, displayName, email: `${username}@example.test`, password, roles } }),
      `create user ${username}`,
    );
    return { id: user.id, username, displayName, password };
  }

  /** The first demo arm with `joints` joints. */
  async arm(joints: number): Promise<Arm> {
    const { arms } = await body<{ arms: Arm[] }>(await (await this.as("emeka")).get("/api/arms"), "list arms");
    const arm = arms.find((a) => a.model.joints.length === joints);
    if (!arm) throw new Error(`no demo arm with ${joints} joints`);
    return arm;
  }

  /** The profile defaults the console prefills for `arm` (half of each rated joint speed, 250 mm/s TCP). */
  defaults(arm: Arm): ProfileParams {
    return defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  }

  /** A profile for `operator` written by `engineer` (version 1, a draft). */
  async profile(options: { name: string; operator: Person; arm: Arm; params?: ProfileParams; note?: string; engineer?: Person }): Promise<ProfileRef> {
    const engineer = await this.asPerson(options.engineer, "emeka");
    const { profile } = await body<{ profile: ProfileRef }>(
      await engineer.post("/api/profiles", {
        data: { name: options.name, operatorId: options.operator.id, armId: options.arm.id, params: options.params ?? this.defaults(options.arm), note: options.note ?? "" },
      }),
      `create profile ${options.name}`,
    );
    return profile;
  }

  /** A new version of `profileId` on top of `parent` (the latest), as emeka. */
  async saveVersion(profileId: number, parent: VersionRef, params: ProfileParams, note = ""): Promise<VersionRef> {
    const engineer = await this.as("emeka");
    const { version } = await body<{ version: VersionRef }>(
      await engineer.post(`/api/profiles/${profileId}/versions`, { data: { parentVersionId: parent.id, params, note } }),
      `save a version of profile ${profileId}`,
    );
    return version;
  }

  /** Submit a draft for review, as emeka (or the given engineer). */
  async submit(version: VersionRef, engineer?: Person): Promise<void> {
    await body(await (await this.asPerson(engineer, "emeka")).post(`/api/versions/${version.id}/submit`), `submit version ${version.id}`);
  }

  /** Approve a submitted version, as sigrid. */
  async approve(version: VersionRef, comment = "Approved for a browser test."): Promise<void> {
    await body(
      await (await this.as("sigrid")).post(`/api/versions/${version.id}/approve`, { data: { comment, paramsSha256: version.paramsSha256 } }),
      `approve version ${version.id}`,
    );
  }

  /** A new operator with an approved profile (the console's defaults) on the six-joint arm, ready to drive. */
  async operatorWithApprovedProfile(label = "operator"): Promise<{ operator: Person; profile: ProfileRef }> {
    const operator = await this.person(["operator"], label);
    const profile = await this.profile({ name: `E2E drive ${uniqueTag()}`, operator, arm: await this.arm(6), note: "defaults" });
    await this.submit(profile.latestVersion);
    await this.approve(profile.latestVersion);
    return { operator, profile };
  }

  private asPerson(person: Person | undefined, demo: string): Promise<APIRequestContext> {
    return person ? this.as(person.username, person.password) : this.as(demo);
  }

  async dispose(): Promise<void> {
    for (const session of this.sessions.values()) {
      const context = await session.catch(() => null);
      if (!context) continue;
      await context.post("/api/auth/sign-out").catch(() => undefined);
      await context.dispose();
    }
  }
}

export const test = base.extend<{ setup: Setup }>({
  setup: async ({ baseURL }, use) => {
    const setup = new Setup(baseURL!);
    await use(setup);
    await setup.dispose();
  },
});

/**
 * How often `expect.poll` asks again: every 50, 100, then 200 ms. Playwright's own intervals (100, 250, 500,
 * then 1000 ms) let a condition met just after a check wait up to a second for the next one; the drive
 * tests poll simulation time, readouts and drawn frames 23 times. A call's own `intervals` still wins.
 */
const POLL_INTERVALS = [50, 100, 200];

/** Playwright's `expect`, with `expect.poll` asking at POLL_INTERVALS. */
export const expect = new Proxy(playwrightExpect, {
  get(target, property, receiver) {
    if (property !== "poll") return Reflect.get(target, property, receiver);
    const poll: typeof playwrightExpect.poll = (generator, options) => target.poll(generator, { intervals: POLL_INTERVALS, ...(typeof options === "string" ? { message: options } : options) });
    return poll;
  },
});
