import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { createUserSchema, type CreateUserInput, type User } from "@jogwright/shared";
import { closeThen, Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { useCreateUser } from "../hooks/use-users.ts";
import { FormMessageList } from "./form-messages.tsx";
import { NewPasswordField } from "./new-password-field.tsx";
import { RoleCheckboxes } from "./role-checkboxes.tsx";
import { applyServerIssues } from "../../../lib/server-issues.ts";

const FIELDS = ["username", "displayName", "email", "password", "roles"] as const;

export function CreateUserDialog({ open, onClose, onCreated }: { open: boolean; onClose: () => void; onCreated: (user: User) => void }) {
  return (
    <Dialog open={open} onClose={onClose} title="New user" description="The person signs in with this user name and password.">
      <CreateUserForm onCancel={onClose} onCreated={closeThen(onClose, onCreated)} />
    </Dialog>
  );
}

function CreateUserForm({ onCancel, onCreated }: { onCancel: () => void; onCreated: (user: User) => void }) {
  const createUser = useCreateUser();
  const [formMessages, setFormMessages] = useState<string[]>([]);
  const { register, handleSubmit, setError, formState: { errors } } = useForm({
    resolver: zodResolver(createUserSchema),
    mode: "onTouched",
    defaultValues: { username: "", displayName: "", email: "", password: "", roles: [] },
  });

  const onSubmit = handleSubmit((input: CreateUserInput) => {
    setFormMessages([]);
    createUser.mutate(input, {
      onSuccess: (user) => onCreated(user),
      onError: (error) => {
        if (isApiRequestError(error) && error.status === 409) {
          setError("username", { type: "server", message: error.message }, { shouldFocus: true });
          return;
        }
        setFormMessages(applyServerIssues(error, FIELDS, setError));
      },
    });
  });

  const error = createUser.error;
  const isConflict = isApiRequestError(error) && error.status === 409;
  const hasFieldIssues = isApiRequestError(error) && error.issues.length > 0;
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      <TextField
        label="User name"
        hint="Lower-case letters, digits, dot, dash or underscore; 3 to 40 characters."
        autoComplete="off"
        autoCapitalize="none"
        spellCheck={false}
        error={errors.username?.message}
        {...register("username")}
      />
      <TextField label="Display name" autoComplete="off" error={errors.displayName?.message} {...register("displayName")} />
      <TextField label="E-mail" type="email" autoComplete="off" error={errors.email?.message} {...register("email")} />
      <NewPasswordField
        label="Password"
        hint="At least 10 characters. Hand it over in person; the user can be given a new one later."
        error={errors.password?.message}
        {...register("password")}
      />
      <RoleCheckboxes registration={register("roles")} error={errors.roles?.message ?? errors.roles?.root?.message} />
      {error && !isConflict && !hasFieldIssues ? <Message tone="stop" title="Could not create the user">{error.message}</Message> : null}
      <FormMessageList messages={formMessages} tone="stop" title="Could not create the user" />
      <DialogFormActions onCancel={onCancel} isPending={createUser.isPending} submitLabel="Create user" pendingLabel="Creating…" />
    </form>
  );
}
