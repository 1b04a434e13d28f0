import { defaultProfileParams, type ProfileParams, type User } from "@jogwright/shared";
import { findArm } from "../modules/arms/service.ts";
import { JogTestClient } from "../modules/jog/jog-test-client.ts";
import { createProfile } from "../modules/versions/service.ts";
import { createHarness, demoArmId, freshUser, listenHarness, signedInUser, type Harness } from "./harness.ts";

/** A harness's app listening with the live-jogging socket attached (listenHarness). */
export type Listener = Awaited<ReturnType<typeof listenHarness>>;

/**
 * A live-jogging test file's server: a harness (`env` as for createHarness, sign-in failures relaxed)
 * listening with the jog socket, the ids of the demo six-axis (cell-arm-6) and seven-axis (cell-arm-7)
 * arms, and a fresh operator to assign the file's drafts to. `closeJogServer` ends it.
 */
export async function openJogServer(env: Record<string, string> = {}) {
  const h = createHarness({ SIGN_IN_MAX_FAILURES: "1000", ...env });
  const net = await listenHarness(h);
  const [arm6Id, arm7Id] = await Promise.all([demoArmId(h, "cell-arm-6"), demoArmId(h, "cell-arm-7")]);
  const operatorId = (await freshUser(h, ["operator"])).user.id;
  return { h, net, arm6Id, arm7Id, operatorId };
}

/** Ends what openJogServer opened: live sessions and the listener first (flushing recordings), then the harness. */
export async function closeJogServer(net: Listener | undefined, h: Harness | undefined): Promise<void> {
  await net?.close();
  await h?.close();
}

/** A jog socket as the console opens one: with `cookie`'s session, from the listener's own origin. */
export function connectJog(net: Listener, cookie: string): Promise<JogTestClient> {
  return JogTestClient.connect(net.wsUrl, { Cookie: cookie, Origin: net.baseUrl });
}

/** A draft by `author` on an arm with the arm's default parameters, for `operatorId`; its version id (engineers may drive drafts). */
export async function draftVersion(h: Harness, author: User, armId: number, operatorId: string, name: string): Promise<number> {
  const arm = (await findArm(h.db, armId))!;
  const params = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  const profile = await createProfile(h.ctx, author, { name, operatorId, armId, params, note: "" });
  return profile.latestVersion.id;
}

/**
 * The draft the recording and replay files drive live: the six-axis demo arm with a smooth stick (deadband
 * 0.05, expo 0.3), 60 % override and the damp-through guard, saved by a fresh signed-in engineer for a
 * fresh operator under a unique `name`.
 */
export async function smoothStickDraft(h: Harness, name: string) {
  const engineer = await signedInUser(h, ["engineer"]);
  const operator = await freshUser(h, ["operator"]);
  const arm = (await findArm(h.db, await demoArmId(h, "cell-arm-6")))!;
  const base = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  const params: ProfileParams = {
    ...base,
    shaping: { ...base.shaping, deadband: 0.05, expo: 0.3 },
    speedOverride: { defaultPercent: 60, maxPercent: 100 },
    guard: { ...base.guard, policy: "damp-through" },
  };
  const profile = await createProfile(h.ctx, engineer.user, { name: `${name} ${Date.now().toString(36)}`, operatorId: operator.user.id, armId: arm.id, params, note: "" });
  return { engineer, arm, params, versionId: profile.latestVersion.id, profileId: profile.id };
}
export type SmoothStickDraft = Awaited<ReturnType<typeof smoothStickDraft>>;
