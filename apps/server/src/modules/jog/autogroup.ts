import { readFileSync, writeFileSync } from "node:fs";

/**
 * The server's claim on the CPU against the other programs on its machine, while it simulates live
 * sessions (issue 11: tick lateness while a build or the test suite runs on the same 2 cores).
 *
 * Linux shares the CPU between autogroups first and between the threads of a group second: every session
 * (setsid(2): a terminal, a service, a browser Playwright starts) is one autogroup, and a thread's nice value
 * counts only against the threads of its own group (sched(7), "The autogroup feature"). So the simulation
 * thread's nice −10 (sim-worker.ts) did not help against a build started from another terminal: that build's
 * group got as much CPU as the whole server's. Measured on 2 cores with `vite build` looping in its own
 * session, 50 sessions at 1 kHz (DEVELOPERS.md "The server's autogroup and a real-time tick loop"): tick
 * lateness p99 4.2–8.2 ms and input-to-state p99 65–247 ms with the server's group at nice 0, 1.6–4.2 ms
 * and 10.6–19.6 ms at −10.
 *
 * The group's nice value is the session's, so the server changes it only when it leads a session of its
 * own (`npm start` and the load benchmark start it so); started inside someone else's session (a shell, the
 * test runner) it would favour that shell too, and leaves it alone. It lowers the value while at least one
 * live session is simulated and restores the value it found when none is: the tuning bench's pool threads
 * share the group, and a sweep alone should not crowd out a browser on the same machine. Lowering a nice
 * value needs CAP_SYS_NICE (root has it); without it the server runs as before and says why at start.
 */
export class AutogroupPriority {
  private isFavoured = false;
  /** Why the group is left alone; null while the server may change it. */
  private unavailable: string | null;

  private constructor(
    readonly favouredNice: number,
    /** The group's nice value when the server started: what it goes back to. */
    readonly restingNice: number,
    unavailable: string | null,
    private readonly file: string,
  ) {
    this.unavailable = unavailable;
  }

  /**
   * Looks at this process's autogroup (`proc`: its /proc directory; `pid`: its id). `favouredNice` 0 asks
   * for nothing (SERVER_AUTOGROUP_NICE=0).
   */
  static open(favouredNice: number, proc = "/proc/self", pid = process.pid): AutogroupPriority {
    const file = `${proc}/autogroup`;
    const off = (reason: string, resting = 0) => new AutogroupPriority(favouredNice, resting, reason, file);
    if (favouredNice === 0) return off("SERVER_AUTOGROUP_NICE=0");
    let resting: number;
    try {
      resting = niceOf(readFileSync(file, "utf8"));
    } catch {
      return off("this system schedules no autogroups (no /proc/self/autogroup)");
    }
    if (sessionOf(readFileSync(`${proc}/stat`, "utf8")) !== pid) {
      return off("the server shares its session with the program that started it (npm start gives it one of its own)", resting);
    }
    return new AutogroupPriority(favouredNice, resting, null, file);
  }

  /** True when the server may change its group's priority (it leads its session, and was permitted so far). */
  get isAvailable(): boolean {
    return this.unavailable === null;
  }

  /** Favours the group (live sessions run) or restores its priority (none run). A refusal switches it off for good. */
  setFavoured(on: boolean): void {
    if (this.unavailable !== null || on === this.isFavoured) return;
    try {
      writeFileSync(this.file, String(on ? this.favouredNice : this.restingNice));
      this.isFavoured = on;
    } catch (error) {
      const code = (error as NodeJS.ErrnoException).code ?? "refused";
      this.unavailable = `the system refused (${code}): lowering a nice value needs CAP_SYS_NICE`;
      console.warn(`[jogwright] warning: the server's autogroup priority could not be changed: ${this.unavailable}.`);
    }
  }

  /** The group's nice value now, as the system reports it (null without autogroups). */
  currentNice(): number | null {
    try {
      return niceOf(readFileSync(this.file, "utf8"));
    } catch {
      return null;
    }
  }

  /** One sentence for the start-up log. */
  describe(): string {
    return this.unavailable === null
      ? `while live sessions run, the server's autogroup runs at nice ${this.favouredNice} (at ${this.restingNice} otherwise), ahead of other programs on this machine`
      : `the server's autogroup keeps its priority: ${this.unavailable}`;
  }
}

/** The nice value in /proc/<pid>/autogroup ("/autogroup-25 nice 0"). */
function niceOf(text: string): number {
  const m = /nice\s+(-?\d+)/.exec(text);
  if (!m) throw new Error(`unreadable autogroup: ${text.trim()}`);
  return Number(m[1]);
}

/** The session id in /proc/<pid>/stat: the 6th field, the 4th after the command name's closing parenthesis. */
function sessionOf(stat: string): number {
  return Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[3]);
}
