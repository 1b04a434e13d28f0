/**
 * Spreads the jog sockets' periodic re-checks (socket.ts) over their interval: a member joins one of
 * `slots` turns, round-robin, and a timer every interval/slots takes the next turn. Rechecking every
 * connection at once took the main thread for ~0.5 s every 10 s with 50 sessions (each re-check reads the
 * session, the account and the driven version), and every frame and input of that moment waited
 * (DEVELOPERS.md, "Load benchmark"); spread, a turn holds one or two re-checks.
 */
export class RecheckRota<T> {
  private readonly turnOf = new Map<T, number>();
  private nextSlot = 0;
  private turn = 0;

  constructor(readonly slots: number) {
    if (!Number.isInteger(slots) || slots < 1) throw new Error("slots must be a whole number ≥ 1");
  }

  add(member: T): void {
    if (this.turnOf.has(member)) return;
    this.turnOf.set(member, this.nextSlot);
    this.nextSlot = (this.nextSlot + 1) % this.slots;
  }

  delete(member: T): void {
    this.turnOf.delete(member);
  }

  /** The members whose turn is next; each member comes up once in every `slots` calls. */
  next(): T[] {
    const turn = this.turn;
    this.turn = (turn + 1) % this.slots;
    const out: T[] = [];
    for (const [member, slot] of this.turnOf) if (slot === turn) out.push(member);
    return out;
  }
}
