import { useQuery } from "@tanstack/react-query";
import { drivingRefusalMessage, isDriveable, type User } from "@jogwright/shared";
import { Message } from "../../../components/ui/message.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { versionDetailQueryOptions } from "../../../lib/queries/profiles.ts";

/** `?version=<id>`: a positive whole number, else null (the refusal then says the address is not a version). */
export function parseVersionParam(param: string | null): number | null {
  if (param === null || !/^\d{1,12}$/.test(param)) return null;
  const id = Number(param);
  return id > 0 ? id : null;
}

/**
 * Why the version named in the address (`/drive?version=<id>`, the profile page's "Test-drive this
 * version") is not offered: the shared driving rule (isDriveable) on the version as this person may read
 * it, in its own words; a version they cannot read is "not found", like a missing id (the server answers
 * 404 for another operator's profile, so nobody is named).
 */
export function AddressVersionRefusal({ versionParam, versionId, user }: { versionParam: string; versionId: number | null; user: User }) {
  const detail = useQuery({ ...versionDetailQueryOptions(versionId ?? 0), enabled: versionId !== null, retry: false });
  let text: string;
  if (versionId === null) text = `“${versionParam}” in the address is not a version number. Pick a profile and a version below.`;
  else if (detail.isPending) return null;
  else if (detail.isError) {
    text = isApiRequestError(detail.error) && (detail.error.status === 404 || detail.error.status === 403)
      ? `There is no version ${versionId} that you can see. Pick a profile and a version below.`
      : `Version ${versionId} could not be checked: ${detail.error.message}`;
  } else {
    const { version, profile } = detail.data;
    const decision = isDriveable({ state: version.state, exceedsCeilings: version.exceedsCeilings, operatorId: profile.operatorId }, user);
    text = decision.isDriveable
      ? `“${profile.name}” version ${version.number} is not among the versions you may drive right now; reload the page to check again.`
      : drivingRefusalMessage(decision, `“${profile.name}” version ${version.number}`);
  }
  return (
    <Message tone="warn" title="The version in the address cannot be driven">
      <span data-testid="address-version-refusal">{text}</span>
    </Message>
  );
}
