import { ROLES, ROLE_LABELS, type Role } from "@jogwright/shared";

/** What each role does in Jogwright, in plain words (PRODUCT.md, "Who uses it, and for what"). */
export const ROLE_SUMMARIES: Record<Role, string> = {
  operator:
    "You drive the simulated arm. You choose one of the rate profiles that was approved and assigned to you, jog the tool with a gamepad, sliders or the keyboard while holding the enabling control, watch how close the arm is to a singularity or a joint limit, and can record the session.",
  engineer:
    "You tune how the arm answers an operator's hands. You write rate profiles for each operator on the site's arms, try them live on the simulated arm, run scripted trials through and near singular poses, sweep a parameter to find a good setting, compare versions side by side, and submit a version for review with its trial evidence.",
  safety_officer:
    "You decide what may be driven. You set the site ceilings that no profile may exceed, review submitted versions with what changed since the last approved one and the ceiling check, then approve and lock, reject with a reason, or retire a version. You can read the audit trail.",
  admin:
    "You keep the accounts in order: create users, give and take roles, set new passwords, deactivate and reactivate accounts, and read the log of outgoing mail.",
};

export function RoleSummaries({ roles }: { roles: readonly Role[] }) {
  const held = ROLES.filter((r) => roles.includes(r));
  return (
    <ul className="grid gap-4 md:grid-cols-2" aria-label="Your roles">
      {held.map((role) => (
        <li key={role} className="rounded-lg border border-ink-700 bg-ink-850 p-5">
          <h2 className="mb-2 text-lg font-bold">
            <span className="mr-2 inline-block size-2 rounded-full bg-iris-400 align-middle" aria-hidden />
            {ROLE_LABELS[role]}
          </h2>
          <p className="text-ink-300">{ROLE_SUMMARIES[role]}</p>
        </li>
      ))}
    </ul>
  );
}
