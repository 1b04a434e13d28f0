import { useMemo, useState } from "react";
import { Link, useNavigate } from "react-router";
import { ArrowLeft, Plus } from "lucide-react";
import { createProfileSchema, defaultProfileParams, type Arm, type ProfileParams } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { SubmitButton } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { armAtRevision } from "../../../lib/arm-revision.ts";
import { useArmDetail, useArms } from "../../../lib/queries/arms.ts";
import { useCeilings } from "../../../lib/queries/ceilings.ts";
import { useCreateProfile, useOperators } from "../hooks/use-profiles.ts";
import { pickableTools } from "../forms/arm-choice.ts";
import { ArmRevisionFields } from "./arm-revision-fields.tsx";
import { ProfileParamsForm } from "./profile-params-form.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

const headSchema = createProfileSchema.pick({ name: true, operatorId: true });

/** Defaults for an arm: half of each joint's rated speed (a joint without one gets 1 rad/s as its basis). */
const defaultsFor = (arm: Arm): ProfileParams => defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed ?? 1));

export function NewProfilePage() {
  const arms = useArms();
  const operators = useOperators();
  const ceilings = useCeilings();
  const create = useCreateProfile();
  const navigate = useNavigate();
  const [name, setName] = useState("");
  const [operatorId, setOperatorId] = useState("");
  const [armId, setArmId] = useState<number | null>(null);
  const [isHeadTouched, setHeadTouched] = useState(false);

  const listedArm = arms.data?.find((a) => a.id === (armId ?? arms.data[0]?.id));
  // The arm revision and tool version 1 is made on (issue 12): the current revision and its first tool in service unless picked.
  const armDetail = useArmDetail(listedArm?.id ?? null);
  const [picked, setPicked] = useState<{ armId: number; revisionId: number; toolId: number | null } | null>(null);
  const revisions = armDetail.data?.revisions ?? [];
  const pickedHere = picked && picked.armId === listedArm?.id ? picked : null;
  const revision = revisions.find((r) => r.id === pickedHere?.revisionId) ?? revisions[0];
  const toolsInService = pickableTools(revision, null);
  const tool = pickedHere && pickedHere.revisionId === revision?.id ? toolsInService.find((t) => t.id === pickedHere.toolId) : toolsInService[0];
  // Memoized: the form's checks follow the arm object, and its defaults are read from the arm once.
  const arm = useMemo(
    () => (listedArm ? armAtRevision(listedArm, armDetail.data, revision?.id, tool?.id) : undefined),
    [listedArm, armDetail.data, revision?.id, tool?.id],
  );
  const initialParams = useMemo(() => (arm ? defaultsFor(arm) : null), [arm]);
  const head = headSchema.safeParse({ name, operatorId });
  const headErrors: Record<string, string> = {};
  if (!head.success) for (const issue of head.error.issues) headErrors[String(issue.path[0])] ??= issue.message;
  // The server's issues on the name and operator (the parameters form places its own).
  const serverIssues = isApiRequestError(create.error) ? create.error.issues : [];
  for (const issue of serverIssues) if (issue.path === "name" || issue.path === "operatorId") headErrors[issue.path] = issue.message;
  const showHead = (key: string) => (isHeadTouched ? headErrors[key] : undefined);

  if (arms.isPending || operators.isPending) return <Loading label="Loading arms and operators…" />;
  if (arms.isError || operators.isError) {
    return (
      <Message tone="stop" title="Could not load arms or operators">
        {(arms.error ?? operators.error)?.message}
      </Message>
    );
  }

  const onSave = (params: ProfileParams, note: string) => {
    setHeadTouched(true);
    if (!head.success || !arm) return;
    create.mutate(
      { name: name.trim(), operatorId, armId: arm.id, params, note, ...(revision ? { armRevisionId: revision.id, toolId: tool?.id ?? null } : {}) },
      { onSuccess: (profile) => navigate(`/profiles/${profile.id}`) },
    );
  };

  return (
    <>
      <DocumentTitle page="New profile" />
      <Link to="/profiles" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> All profiles
      </Link>
      <PageHeader title="New profile" description="A rate profile for one operator on one arm. It starts as draft v1; submit it for review when it is ready." />
      <div className="flex flex-col gap-6">
        <Card title="Who and which arm">
          <div className="grid gap-4 md:grid-cols-3">
            <TextField label="Profile name" value={name} onChange={(e) => setName(e.target.value)} onBlur={() => setHeadTouched(true)} error={showHead("name")} />
            <SelectField label="Operator" value={operatorId} onChange={(e) => setOperatorId(e.target.value)} onBlur={() => setHeadTouched(true)} error={showHead("operatorId")}>
              <option value="">Pick an operator…</option>
              {operators.data.map((o) => (
                <option key={o.id} value={o.id}>
                  {o.displayName} ({o.username})
                </option>
              ))}
            </SelectField>
            <SelectField
              label="Arm"
              value={arm?.id ?? ""}
              onChange={(e) => setArmId(Number(e.target.value))}
              hint="Changing the arm resets the parameters to that arm's defaults."
            >
              {arms.data.map((a) => (
                <option key={a.id} value={a.id}>
                  {a.name} ({a.model.joints.length} joints)
                </option>
              ))}
            </SelectField>
            <ArmRevisionFields
              detail={armDetail.data}
              value={revision ? { revisionId: revision.id, toolId: tool?.id ?? null } : null}
              base={null}
              onChange={(choice) => listedArm && setPicked({ armId: listedArm.id, ...choice })}
              revisionHint="The profile keeps this revision; it moves to another only by saving a new version."
            />
          </div>
        </Card>
        {arm && initialParams ? (
          <Card title="Parameters" description="Prefilled with defaults for this arm: joint caps at half the rated speed, TCP 250 mm/s. Stored in SI units.">
            <ProfileParamsForm
              key={`${arm.id}-${revision?.id ?? "latest"}`}
              formId="new-profile-form"
              arm={arm}
              ceilings={ceilings.data?.ceilings}
              initialParams={initialParams}
              serverError={create.error}
              onSave={onSave}
              footer={() => (
                <div className="flex flex-col gap-3">
                  {create.isError && (!isApiRequestError(create.error) || create.error.issues.length === 0) ? (
                    <Message tone="stop" title="Could not create the profile">
                      {create.error.message}
                    </Message>
                  ) : null}
                  {isHeadTouched && !head.success ? <Message tone="stop">Give the profile a name and pick an operator above.</Message> : null}
                  <div className="flex justify-end gap-2">
                    <SubmitButton icon={Plus} isPending={create.isPending} pendingLabel="Creating…" onClick={() => setHeadTouched(true)}>
                      Create profile
                    </SubmitButton>
                  </div>
                </div>
              )}
            />
          </Card>
        ) : (
          <Message tone="warn">No arms are defined yet.</Message>
        )}
      </div>
    </>
  );
}
