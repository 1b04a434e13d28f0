import { readFileSync } from "node:fs";

/**
 * True when this process holds CAP_SYS_NICE (capability bit 23, capabilities(7)) in its effective set: what
 * lowering a nice value and real-time scheduling need. Root usually has it; root in a container that drops
 * it (Docker's default) does not, so tests ask for the capability, not for uid 0.
 */
export function hasCapSysNice(): boolean {
  try {
    const hex = /^CapEff:\s*([0-9a-f]+)$/m.exec(readFileSync("/proc/self/status", "utf8"))?.[1];
    return hex !== undefined && (BigInt(`0x${hex}`) & (1n << 23n)) !== 0n;
  } catch {
    return false;
  }
}
