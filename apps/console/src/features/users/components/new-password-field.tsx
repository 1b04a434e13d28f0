import { TextField, type TextFieldProps } from "../../../components/ui/text-field.tsx";

/** A user's new password, as the create and edit forms ask for it: hidden, and never filled in from a saved password. */
export function NewPasswordField(props: Omit<TextFieldProps, "type" | "autoComplete">) {
  return <TextField type="password" autoComplete="new-password" {...props} />;
}
