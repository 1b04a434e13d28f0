/** The review queue's key factory: every change to a version's state invalidates `reviewKeys.all`. */
export const reviewKeys = {
  all: ["reviews"] as const,
  queue: () => [...reviewKeys.all, "queue"] as const,
};
