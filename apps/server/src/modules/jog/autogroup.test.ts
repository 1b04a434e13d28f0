import { spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { hasCapSysNice } from "../../test/capabilities.ts";
import { AutogroupPriority } from "./autogroup.ts";

// The /proc/<pid>/autogroup and /proc/<pid>/stat formats are the kernel's (proc(5), sched(7) "The autogroup
// feature"); the fake directories below hold the same text.
const PID = 4242;
const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

function fakeProc({ session = PID, nice = 0, command = "node", autogroup = true } = {}): string {
  const dir = mkdtempSync(path.join(tmpdir(), "jog-autogroup-"));
  dirs.push(dir);
  // pid (comm) state ppid pgrp session …
  writeFileSync(path.join(dir, "stat"), `${PID} (${command}) S 1 ${session} ${session} 0 -1 4194560 1 0 0 0\n`);
  if (autogroup) writeFileSync(path.join(dir, "autogroup"), `/autogroup-17 nice ${nice}\n`);
  return dir;
}
const written = (dir: string) => readFileSync(path.join(dir, "autogroup"), "utf8");

describe("the server's autogroup priority", () => {
  it("is lowered while sessions run and restored to what it found when none do, writing only on a change", () => {
    const dir = fakeProc({ nice: 3 });
    const p = AutogroupPriority.open(-10, dir, PID);
    expect(p.isAvailable).toBe(true);
    p.setFavoured(false);
    expect(written(dir)).toBe("/autogroup-17 nice 3\n"); // nothing to restore yet: untouched
    p.setFavoured(true);
    expect(written(dir)).toBe("-10");
    writeFileSync(path.join(dir, "autogroup"), "/autogroup-17 nice -10\n");
    p.setFavoured(true); // already favoured: no second write
    expect(written(dir)).toBe("/autogroup-17 nice -10\n");
    expect(p.currentNice()).toBe(-10);
    p.setFavoured(false);
    expect(written(dir)).toBe("3");
    expect(p.describe()).toMatch(/nice -10 \(at 3 otherwise\)/);
  });

  it("leaves the group alone when the server does not lead its session (it would favour its launcher too)", () => {
    const dir = fakeProc({ session: 99 });
    const p = AutogroupPriority.open(-10, dir, PID);
    p.setFavoured(true);
    expect(p.isAvailable).toBe(false);
    expect(written(dir)).toBe("/autogroup-17 nice 0\n");
    expect(p.describe()).toMatch(/shares its session with the program that started it/);
  });

  it("reads the session after the command name, whatever the name holds", () => {
    const dir = fakeProc({ command: "a) S 1 99 99 (b" });
    expect(AutogroupPriority.open(-10, dir, PID).isAvailable).toBe(true);
    const other = fakeProc({ command: "a) S 1 4242 4242 (b", session: 99 });
    expect(AutogroupPriority.open(-10, other, PID).isAvailable).toBe(false);
  });

  it("does nothing without autogroups or when SERVER_AUTOGROUP_NICE is 0", () => {
    const none = AutogroupPriority.open(-10, fakeProc({ autogroup: false }), PID);
    none.setFavoured(true);
    expect(none.isAvailable).toBe(false);
    expect(none.describe()).toMatch(/no \/proc\/self\/autogroup/);
    const dir = fakeProc();
    const zero = AutogroupPriority.open(0, dir, PID);
    zero.setFavoured(true);
    expect(zero.describe()).toMatch(/SERVER_AUTOGROUP_NICE=0/);
    expect(written(dir)).toBe("/autogroup-17 nice 0\n");
  });

  it("switches itself off, with the reason, when the system refuses the write", () => {
    const dir = fakeProc();
    const p = AutogroupPriority.open(-10, dir, PID);
    // The file turns into a directory: the write fails (EISDIR), as an unprivileged write fails with EACCES.
    rmSync(path.join(dir, "autogroup"));
    mkdirSync(path.join(dir, "autogroup"));
    const warn = console.warn;
    const warnings: string[] = [];
    console.warn = (m: string) => warnings.push(m);
    try {
      p.setFavoured(true);
      p.setFavoured(false);
      p.setFavoured(true);
    } finally {
      console.warn = warn;
    }
    expect(p.isAvailable).toBe(false);
    expect(p.describe()).toMatch(/the system refused \(EISDIR\)/);
    expect(warnings).toHaveLength(1);
  });

  it.runIf(existsSync("/proc/self/autogroup"))("never touches the test runner's own group: the runner's session is not the server's", () => {
    const before = readFileSync("/proc/self/autogroup", "utf8");
    const p = AutogroupPriority.open(-10);
    p.setFavoured(true);
    expect(p.isAvailable).toBe(false);
    expect(readFileSync("/proc/self/autogroup", "utf8")).toBe(before);
  });

  // The real kernel, as `npm start` runs the server: a process that leads its own session (spawn detached,
  // i.e. setsid) lowers its group's nice value and restores it. Needs autogroups and CAP_SYS_NICE.
  it.runIf(existsSync("/proc/self/autogroup") && hasCapSysNice())(
    "a process leading its own session lowers its autogroup's nice value on this kernel and restores it",
    () => {
      const script = `
        import { readFileSync } from "node:fs";
        import { AutogroupPriority } from ${JSON.stringify(path.join(import.meta.dirname, "autogroup.ts"))};
        const p = AutogroupPriority.open(-10);
        const read = () => readFileSync("/proc/self/autogroup", "utf8").trim();
        const seen = [p.isAvailable, read()];
        p.setFavoured(true);
        seen.push(read());
        p.setFavoured(false);
        seen.push(read());
        console.log(JSON.stringify(seen));`;
      const r = spawnSync("setsid", [process.execPath, "--import", "tsx", "--input-type=module", "-e", script], { encoding: "utf8", timeout: 20_000 });
      expect(r.stderr).toBe("");
      const [available, before, favoured, after] = JSON.parse(r.stdout) as [boolean, string, string, string];
      expect(available).toBe(true);
      expect(before).toMatch(/^\/autogroup-\d+ nice 0$/);
      expect(favoured).toBe(before.replace(/nice 0$/, "nice -10"));
      expect(after).toBe(before);
    },
  );
});
