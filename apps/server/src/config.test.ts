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
    [{}, /DATABASE_URL is not set/],
    [{ ...good, PORT: "http" }, /^PORT /],
    [{ ...good, PORT: "70000" }, /^PORT must be 1-65535/],
    [{ ...good, TRUST_PROXY: "yes" }, /^TRUST_PROXY /],
  ])("refuses %j with one clear sentence", (env, message) => {
    expect(() => loadConfig(env as NodeJS.ProcessEnv)).toThrow(ConfigError);
    expect(() => loadConfig(env as NodeJS.ProcessEnv)).toThrow(message);
  });
});
