import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { z } from "zod";
import { passwordSchema, updateUserSchema, type UpdateUserInput, type User } from "@jogwright/shared";
import { closeThen, Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { useUpdateUser } from "../hooks/use-users.ts";
import { FormMessageList } from "./form-messages.tsx";
import { NewPasswordField } from "./new-password-field.tsx";
import { RoleCheckboxes } from "./role-checkboxes.tsx";
import { applyServerIssues } from "../../../lib/server-issues.ts";

// The edit form shows every field; the request carries only what changed. The field rules are
// updateUserSchema's own; an empty new password means "keep the current one".
const editUserFormSchema = z.object({
  displayName: updateUserSchema.shape.displayName.unwrap(),
  email: updateUserSchema.shape.email.unwrap(),
  roles: updateUserSchema.shape.roles.unwrap(),
  password: z.string().superRefine((value, ctx) => {
    if (value === "") return;
    const result = passwordSchema.safeParse(value);
    if (!result.success) for (const issue of result.error.issues) ctx.addIssue({ code: "custom", message: issue.message });
  }),
});
type EditUserFormValues = z.output<typeof editUserFormSchema>;

const FIELDS = ["displayName", "email", "roles", "password"] as const;

export function EditUserDialog({ user, onClose, onSaved }: { user: User | null; onClose: () => void; onSaved: (user: User) => void }) {
  return (
    <Dialog open={user !== null} onClose={onClose} title={user ? `Edit ${user.username}` : "Edit user"} description="The user name cannot change.">
      {user ? <EditUserForm key={user.id} user={user} onCancel={onClose} onSaved={closeThen(onClose, onSaved)} /> : null}
    </Dialog>
  );
}

function changedFields(user: User, values: EditUserFormValues): UpdateUserInput {
  const patch: UpdateUserInput = {};
  if (values.displayName !== user.displayName) patch.displayName = values.displayName;
  if (values.email !== user.email) patch.email = values.email;
  const sameRoles = values.roles.length === user.roles.length && values.roles.every((r) => user.roles.includes(r));
  if (!sameRoles) patch.roles = values.roles;
  if (values.password !== "") patch.password = values.password;
  return patch;
}

function EditUserForm({ user, onCancel, onSaved }: { user: User; onCancel: () => void; onSaved: (user: User) => void }) {
  const updateUser = useUpdateUser();
  const [formMessages, setFormMessages] = useState<string[]>([]);
  const { register, handleSubmit, setError, formState: { errors } } = useForm({
    resolver: zodResolver(editUserFormSchema),
    mode: "onTouched",
    defaultValues: { displayName: user.displayName, email: user.email, roles: [...user.roles], password: "" },
  });

  const onSubmit = handleSubmit((values: EditUserFormValues) => {
    setFormMessages([]);
    const parsed = updateUserSchema.safeParse(changedFields(user, values));
    if (!parsed.success) {
      setFormMessages(parsed.error.issues.map((i) => (i.message === "nothing to change" ? "Nothing to save: no field was changed." : i.message)));
      return;
    }
    updateUser.mutate(
      { id: user.id, patch: parsed.data },
      {
        onSuccess: (saved) => onSaved(saved),
        onError: (error) => setFormMessages(applyServerIssues(error, FIELDS, setError)),
      },
    );
  });

  const error = updateUser.error;
  const hasFieldIssues = isApiRequestError(error) && error.issues.length > 0;
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      <TextField label="Display name" autoComplete="off" error={errors.displayName?.message} {...register("displayName")} />
      <TextField label="E-mail" type="email" autoComplete="off" error={errors.email?.message} {...register("email")} />
      <RoleCheckboxes registration={register("roles")} error={errors.roles?.message ?? errors.roles?.root?.message} />
      <NewPasswordField
        label="New password (optional)"
        hint="Leave empty to keep the current password; otherwise at least 10 characters."
        error={errors.password?.message}
        {...register("password")}
      />
      {error && !hasFieldIssues ? <Message tone="stop" title="Could not save">{error.message}</Message> : null}
      <FormMessageList messages={formMessages} tone={error ? "stop" : "info"} title={error ? "Could not save" : undefined} />
      <DialogFormActions onCancel={onCancel} isPending={updateUser.isPending} submitLabel="Save changes" pendingLabel="Saving…" />
    </form>
  );
}
