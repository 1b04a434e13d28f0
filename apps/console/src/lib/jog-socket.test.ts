import { describe, expect, it } from "vitest";
import { JOG_CLOSE_CODES } from "@jogwright/shared";
import { describeEnded, isFinalClose, mayStopWatchedSession } from "./jog-socket.ts";

describe("the jog socket client's decisions", () => {
  it("shows a STOP on a watched session to safety officers only, and never while driving or with nothing watched", () => {
    const watching = { isWatching: true };
    expect(mayStopWatchedSession(["safety_officer"], watching)).toBe(true);
    expect(mayStopWatchedSession(["engineer", "safety_officer"], watching)).toBe(true);
    expect(mayStopWatchedSession(["engineer"], watching)).toBe(false);
    expect(mayStopWatchedSession(["safety_officer"], { isWatching: false })).toBe(false);
    expect(mayStopWatchedSession(["safety_officer"], null)).toBe(false);
    // Roles come from the server's latest `welcome`, which it sends again when an admin changes them.
    expect(mayStopWatchedSession([], watching)).toBe(false);
  });

  it("does not reconnect after a sign-out or a deactivation, and does after other closes", () => {
    expect(isFinalClose(JOG_CLOSE_CODES.signedOut)).toBe(true);
    expect(isFinalClose(JOG_CLOSE_CODES.accountDeactivated)).toBe(true);
    for (const code of [1000, 1001, 1006, 1008, 1009]) expect(isFinalClose(code)).toBe(false);
  });

  it("says why a session ended in the server's words, or by its reason code from an older server", () => {
    expect(describeEnded({ sessionId: "s", reason: "account-deactivated", message: "An administrator deactivated your account.", recordingId: 1 })).toBe(
      "An administrator deactivated your account.",
    );
    expect(describeEnded({ sessionId: "s", reason: "stopped", recordingId: null })).toBe("stopped.");
  });
});
