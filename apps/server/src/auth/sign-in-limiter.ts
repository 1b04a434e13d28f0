import { RateLimiterRes, type RateLimiterAbstract } from "rate-limiter-flexible";
import { rateLimiter, type Scale } from "../scale/redis.ts";

/**
 * Sign-in attempts are counted per account-and-address and per address. Every attempt takes its point
 * *before* the password is checked (`consume` increments and compares in one step, so parallel requests
 * cannot all slip past a check that only reads the count); a good password gives the point back. Past
 * either limit the next attempts get 429 until the window passes, without their password being checked.
 * Scaled out (REDIS_URL), the counts live in Redis and hold over every instance.
 */
export class SignInLimiter {
  private readonly perAccount: RateLimiterAbstract;
  private readonly perAddress: RateLimiterAbstract;

  constructor(opts: { maxFailures: number; windowS: number; maxFailuresPerAddress: number }, scale: Scale | null = null) {
    this.perAccount = rateLimiter(scale, { keyPrefix: "sign-in-acct", points: opts.maxFailures, duration: opts.windowS });
    this.perAddress = rateLimiter(scale, { keyPrefix: "sign-in-addr", points: opts.maxFailuresPerAddress, duration: opts.windowS });
  }

  private static key(username: string, address: string): string {
    return `${username.toLowerCase()}|${address}`;
  }

  /**
   * Takes one attempt from both counters. Returns 0 when the password may be checked, else the seconds
   * to wait; a refused attempt gives back the point it took from the counter that still had room, so
   * refusals do not count as failures.
   */
  async takeAttempt(username: string, address: string): Promise<number> {
    const acctKey = SignInLimiter.key(username, address);
    const [acct, addr] = await Promise.allSettled([this.perAccount.consume(acctKey, 1), this.perAddress.consume(address, 1)]);
    const refused = [acct, addr].filter((r) => r.status === "rejected").map((r) => r.reason as unknown);
    if (refused.length === 0) return 0;
    // A store error (not a RateLimiterRes) is a real failure: let the error handler log it.
    const storeError = refused.find((reason) => !(reason instanceof RateLimiterRes));
    if (acct.status === "fulfilled") await this.perAccount.reward(acctKey, 1);
    if (addr.status === "fulfilled") await this.perAddress.reward(address, 1);
    if (storeError) throw storeError;
    const waitMs = Math.max(...refused.map((reason) => (reason as RateLimiterRes).msBeforeNext));
    return Math.max(1, Math.ceil(waitMs / 1000));
  }

  /** The password was right: the attempt taken by takeAttempt was no failure. */
  async refundAttempt(username: string, address: string): Promise<void> {
    await Promise.all([this.perAccount.reward(SignInLimiter.key(username, address), 1), this.perAddress.reward(address, 1)]);
  }

  /** Signed in: the failures counted for this account from this address are forgiven (the address count is not). */
  async recordSuccess(username: string, address: string): Promise<void> {
    await this.perAccount.delete(SignInLimiter.key(username, address));
  }
}
