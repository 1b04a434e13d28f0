import { describe, expect, it } from "vitest";
import { ConfigError, loadConfig } from "./config.ts";

const good = { DATABASE_URL: "mariadb://u:p@127.0.0.1:3407/jog" };

describe("loadConfig", () => {
  it("reads defaults: loopback, port 3000, demo seed on", () => {
    const c = loadConfig(good);
    expect(c).toMatchObject({ host: "127.0.0.1", port: 3000, seedDemo: true, trustProxy: false });
  });

  it.each([
    [{ DATABASE_URL: "not a url" }, /DATABASE_URL is not a valid URL/],
    [{ DATABASE_URL: "postgres://u@h/db" }, /DATABASE_URL must start with mariadb:\/\//],
    [{ DATABASE_URL: "mariadb://u@h" }, /DATABASE_URL needs a host and a database name/],
    [{ ...good, MIGRATION_DATABASE_URL: "mysql://u@h" }, /^MIGRATION_DATABASE_URL needs a host and a database name: mariadb:\/\/USER:PASSWORD@HOST:PORT\/DATABASE$/],
    [{ ...good, REDIS_URL: "localhost:6379" }, /^REDIS_URL must start with redis:\/\/ or rediss:\/\/ \(got localhost:\/\/\)$/],
    [{ ...good, REDIS_URL: "no url" }, /^REDIS_URL is not a valid URL; expected redis:\/\/HOST:PORT \(optionally redis:\/\/:PASSWORD@HOST:PORT\/DB\)$/],
    [{ ...good, REDIS_URL: "redis://" }, /^REDIS_URL needs a host: redis:\/\/HOST:PORT$/],
    [{}, /DATABASE_URL is not set/],
    [{ ...good, PORT: "http" }, /^PORT /],
    [{ ...good, PORT: "70000" }, /^PORT must be 1-65535/],
    [{ ...good, TRUST_PROXY: "yes" }, /^TRUST_PROXY /],
    [{ ...good, PUBLIC_ORIGIN: "jog.example.com" }, /^PUBLIC_ORIGIN "jog.example.com" is not an origin; expected e.g. https:\/\/jog.example.com/],
    [{ ...good, PUBLIC_ORIGIN: "ftp://jog.example.com" }, /^PUBLIC_ORIGIN "ftp:\/\/jog.example.com" must start with http:\/\/ or https:\/\//],
    [{ ...good, PUBLIC_ORIGIN: "https://jog.example.com/console" }, /^PUBLIC_ORIGIN .* must be only scheme, host and port .*, e.g. https:\/\/jog.example.com$/],
    [{ ...good, ALLOWED_ORIGINS: "http://localhost:5173,localhost:5174" }, /^ALLOWED_ORIGINS "localhost:5174" must start with http:\/\/ or https:\/\//],
    [{ ...good, JOG_MAX_SESSIONS_PER_ACCOUNT: "0" }, /^JOG_MAX_SESSIONS_PER_ACCOUNT must be 1-1000$/],
    [{ ...good, JOG_MAX_SESSIONS: "lots" }, /^JOG_MAX_SESSIONS must be a whole number$/],
    [{ ...good, JOG_STARTS_PER_WINDOW: "2.5" }, /^JOG_STARTS_PER_WINDOW must be a whole number$/],
    [{ ...good, JOG_START_WINDOW_S: "7200" }, /^JOG_START_WINDOW_S must be 1-3600$/],
    [{ ...good, TRIAL_POOL_THREADS: "0" }, /^TRIAL_POOL_THREADS must be 1-64$/],
    [{ ...good, TRIAL_POOL_THREADS: "two" }, /^TRIAL_POOL_THREADS must be a whole number$/],
    [{ ...good, RECORDING_RETENTION_DAYS: "-1" }, /^RECORDING_RETENTION_DAYS must be 0-36500$/],
    [{ ...good, RECORDING_RETENTION_DAYS: "a year" }, /^RECORDING_RETENTION_DAYS must be a whole number$/],
    [{ ...good, RECORDING_RETENTION_MAX_MB: "1.5" }, /^RECORDING_RETENTION_MAX_MB must be a whole number$/],
    [{ ...good, RECORDING_RETENTION_MAX_MB: "20000000" }, /^RECORDING_RETENTION_MAX_MB must be 0-10000000$/],
    [{ ...good, RECORDING_PRUNE_INTERVAL_MIN: "0" }, /^RECORDING_PRUNE_INTERVAL_MIN must be 1-1440$/],
    [{ ...good, SERVER_AUTOGROUP_NICE: "5" }, /^SERVER_AUTOGROUP_NICE must be -20 to 0$/],
    [{ ...good, SERVER_AUTOGROUP_NICE: "-30" }, /^SERVER_AUTOGROUP_NICE must be -20 to 0$/],
    [{ ...good, SERVER_AUTOGROUP_NICE: "high" }, /^SERVER_AUTOGROUP_NICE must be a whole number$/],
    [{ ...good, JOG_SIM_RT_PRIORITY: "100" }, /^JOG_SIM_RT_PRIORITY must be 0-99$/],
    [{ ...good, JOG_SIM_RT_PRIORITY: "rr" }, /^JOG_SIM_RT_PRIORITY must be a whole number$/],
    [{ ...good, JOG_SIM_NICE: "-21" }, /^JOG_SIM_NICE must be -20 to 19$/],
    [{ ...good, JOG_SIM_NICE: "low" }, /^JOG_SIM_NICE must be a whole number$/],
  ])("refuses %j with one clear sentence", (env, message) => {
    expect(() => loadConfig(env as NodeJS.ProcessEnv)).toThrow(ConfigError);
    expect(() => loadConfig(env as NodeJS.ProcessEnv)).toThrow(message);
  });
});

describe("the server's autogroup priority", () => {
  it("is nice -10 while live sessions run by default; 0 leaves it alone", () => {
    expect(loadConfig(good).serverAutogroupNice).toBe(-10);
    expect(loadConfig({ ...good, SERVER_AUTOGROUP_NICE: "0" }).serverAutogroupNice).toBe(0);
    expect(loadConfig({ ...good, SERVER_AUTOGROUP_NICE: "-20" }).serverAutogroupNice).toBe(-20);
  });

  it("asks for SCHED_RR priority 5 for the simulation thread by default; 0 asks for none", () => {
    expect(loadConfig(good).jogSimRealtimePriority).toBe(5);
    expect(loadConfig({ ...good, JOG_SIM_RT_PRIORITY: "0" }).jogSimRealtimePriority).toBe(0);
  });

  it("asks for nice -10 for the simulation thread by default (what counts without real time); 0 leaves it alone", () => {
    expect(loadConfig(good).jogSimNice).toBe(-10);
    expect(loadConfig({ ...good, JOG_SIM_NICE: "0" }).jogSimNice).toBe(0);
  });
});

describe("recording retention", () => {
  it("defaults to 180 days and 10 240 MB, a pass every hour; 0 switches a limit off", () => {
    expect(loadConfig(good).recordingRetention).toEqual({ maxAgeDays: 180, maxBytes: 10_240 * 2 ** 20, pruneIntervalMs: 3_600_000 });
    expect(loadConfig({ ...good, RECORDING_RETENTION_DAYS: "0", RECORDING_RETENTION_MAX_MB: "0", RECORDING_PRUNE_INTERVAL_MIN: "5" }).recordingRetention).toEqual({
      maxAgeDays: null,
      maxBytes: null,
      pruneIntervalMs: 300_000,
    });
  });
});

describe("the public origin", () => {
  it("defaults to http://127.0.0.1 on PORT, and ALLOWED_ORIGINS to none", () => {
    expect(loadConfig(good)).toMatchObject({ publicOrigin: "http://127.0.0.1:3000", allowedOrigins: [] });
    expect(loadConfig({ ...good, PORT: "3150" }).publicOrigin).toBe("http://127.0.0.1:3150");
  });

  it("is kept in the form browsers send in Origin: lower-case host, no default port, no trailing slash", () => {
    expect(loadConfig({ ...good, PUBLIC_ORIGIN: "https://Jog.Example.com:443/" }).publicOrigin).toBe("https://jog.example.com");
    expect(loadConfig({ ...good, PUBLIC_ORIGIN: "http://10.0.0.7:8080" }).publicOrigin).toBe("http://10.0.0.7:8080");
    expect(loadConfig({ ...good, ALLOWED_ORIGINS: " http://localhost:5173 , https://B.example/ " }).allowedOrigins).toEqual([
      "http://localhost:5173",
      "https://b.example",
    ]);
  });
});

describe("the live-jogging limits", () => {
  it("default to 3 live sessions per account, 200 per server and 5 starts per account per 10 s (issue 11, item 8)", () => {
    expect(loadConfig(good).jogLimits).toEqual({ maxSessionsPerAccount: 3, maxSessions: 200, startsPerWindow: 5, startWindowS: 10 });
  });

  it("are read from JOG_MAX_SESSIONS_PER_ACCOUNT, JOG_MAX_SESSIONS, JOG_STARTS_PER_WINDOW and JOG_START_WINDOW_S", () => {
    const env = { ...good, JOG_MAX_SESSIONS_PER_ACCOUNT: "5", JOG_MAX_SESSIONS: "40", JOG_STARTS_PER_WINDOW: "12", JOG_START_WINDOW_S: "60" };
    expect(loadConfig(env).jogLimits).toEqual({ maxSessionsPerAccount: 5, maxSessions: 40, startsPerWindow: 12, startWindowS: 60 });
  });
});
