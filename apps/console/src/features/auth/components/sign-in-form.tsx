import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { LogIn } from "lucide-react";
import { signInSchema, type SignInInput } from "@jogwright/shared";
import { SubmitButton } from "../../../components/ui/button.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { useSignIn } from "../hooks/use-sign-in.ts";

const titles: Record<string, string> = {
  invalid_credentials: "Sign-in failed",
  account_inactive: "This account is deactivated",
  rate_limited: "Too many attempts",
  validation_failed: "Check the fields",
};

export function SignInForm() {
  const signIn = useSignIn();
  const { register, handleSubmit, setError, formState: { errors } } = useForm({
    resolver: zodResolver(signInSchema),
    mode: "onTouched",
    defaultValues: { username: "", password: "" },
  });

  const onSubmit = handleSubmit((input: SignInInput) => {
    // Issues on other paths need no second place: the message below shows the error itself.
    signIn.mutate(input, { onError: (error) => applyServerIssues(error, ["username", "password"], setError) });
  });

  const error = signIn.error;
  const code = isApiRequestError(error) ? error.code : "";
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Sign in">
      <TextField
        label="User name"
        autoComplete="username"
        autoCapitalize="none"
        spellCheck={false}
        autoFocus
        error={errors.username?.message}
        {...register("username")}
      />
      <TextField
        label="Password"
        type="password"
        autoComplete="current-password"
        error={errors.password?.message}
        {...register("password")}
      />
      {error ? (
        <Message tone={code === "rate_limited" ? "warn" : "stop"} title={titles[code] ?? "Could not sign in"}>
          {error.message}
        </Message>
      ) : null}
      <SubmitButton icon={LogIn} isPending={signIn.isPending} pendingLabel="Signing in…" className="mt-1 h-10">
        Sign in
      </SubmitButton>
    </form>
  );
}
