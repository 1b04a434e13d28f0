import { RateLimiterMemory, RateLimiterRes } from "rate-limiter-flexible";

/**
 * Failed sign-ins are counted per account-and-address and per address; past either limit the next
 * attempts get 429 until the window passes. A good password resets the account-and-address count.
 */
export class SignInLimiter {
  private readonly perAccount: RateLimiterMemory;
  private readonly perAddress: RateLimiterMemory;

  constructor(opts: { maxFailures: number; windowS: number; maxFailuresPerAddress: number }) {
    this.perAccount = new RateLimiterMemory({ keyPrefix: "acct", points: opts.maxFailures, duration: opts.windowS });
    this.perAddress = new RateLimiterMemory({ keyPrefix: "addr", points: opts.maxFailuresPerAddress, duration: opts.windowS });
  }

  private static key(username: string, address: string): string {
    return `${username.toLowerCase()}|${address}`;
  }

  /** Seconds to wait before another attempt is allowed, or 0. */
  async retryAfterS(username: string, address: string): Promise<number> {
    const [acct, addr] = await Promise.all([
      this.perAccount.get(SignInLimiter.key(username, address)),
      this.perAddress.get(address),
    ]);
    const blocked = [acct, addr].filter((r): r is RateLimiterRes => r !== null && r.remainingPoints <= 0);
    return blocked.length ? Math.max(1, Math.ceil(Math.max(...blocked.map((r) => r.msBeforeNext)) / 1000)) : 0;
  }

  async recordFailure(username: string, address: string): Promise<void> {
    await Promise.all([
      this.perAccount.penalty(SignInLimiter.key(username, address), 1),
      this.perAddress.penalty(address, 1),
    ]);
  }

  async recordSuccess(username: string, address: string): Promise<void> {
    await this.perAccount.delete(SignInLimiter.key(username, address));
  }
}
