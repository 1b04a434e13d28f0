import { describe, expect, it } from "vitest";
import { RecheckRota } from "./recheck-rota.ts";

describe("the jog sockets' re-check rota", () => {
  it("spreads 50 connections over 100 turns: each comes up once per round, never more than one a turn", () => {
    const rota = new RecheckRota<number>(100);
    for (let i = 0; i < 50; i++) rota.add(i);
    for (let round = 0; round < 3; round++) {
      const seen: number[] = [];
      for (let t = 0; t < 100; t++) {
        const turn = rota.next();
        expect(turn.length).toBeLessThanOrEqual(1);
        seen.push(...turn);
      }
      expect(seen.sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    }
  });

  it("with more connections than turns, a turn holds at most its share, rounded up", () => {
    const rota = new RecheckRota<number>(10);
    for (let i = 0; i < 25; i++) rota.add(i);
    const sizes = Array.from({ length: 10 }, () => rota.next().length);
    expect(Math.max(...sizes)).toBe(3);
    expect(sizes.reduce((a, b) => a + b)).toBe(25);
  });

  it("a connection that leaves is not re-checked again; one added twice comes up once", () => {
    const rota = new RecheckRota<string>(4);
    rota.add("a");
    rota.add("a");
    rota.add("b");
    rota.delete("b");
    const all = Array.from({ length: 4 }, () => rota.next()).flat();
    expect(all).toEqual(["a"]);
  });
});
