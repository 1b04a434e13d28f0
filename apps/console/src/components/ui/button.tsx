import type { ButtonHTMLAttributes } from "react";
import type { LucideIcon } from "lucide-react";
import { cn } from "../../lib/cn.ts";

type Variant = "primary" | "secondary" | "ghost" | "danger";

const variants: Record<Variant, string> = {
  primary: "bg-iris-400 text-ink-950 hover:bg-iris-300 disabled:bg-ink-600 disabled:text-ink-300",
  secondary:
    "border border-ink-600 bg-ink-800 text-ink-100 hover:border-ink-400 disabled:text-ink-400 disabled:hover:border-ink-600",
  ghost: "text-ink-300 hover:bg-ink-800 hover:text-ink-100 disabled:text-ink-600",
  danger: "bg-stop-400 text-ink-950 hover:brightness-110 disabled:bg-ink-600 disabled:text-ink-300",
};

export interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  variant?: Variant;
  size?: "sm" | "md";
}

export function Button({ variant = "secondary", size = "md", className, type = "button", ...rest }: ButtonProps) {
  return (
    <button
      type={type}
      className={cn(
        "inline-flex items-center justify-center gap-2 rounded-md font-semibold transition-colors disabled:cursor-not-allowed",
        size === "md" ? "h-9 px-4 text-sm" : "h-7 px-2.5 text-xs",
        variants[variant],
        className,
      )}
      {...rest}
    />
  );
}

export interface SubmitButtonProps extends Omit<ButtonProps, "type" | "variant"> {
  /** Its icon, before the label. */
  icon: LucideIcon;
  isPending: boolean;
  /** Shown instead of the label, with the button disabled, while the request runs: "Saving…". */
  pendingLabel: string;
}

/** A page form's primary submit button: icon and label, disabled and saying what it does while the request runs. */
export function SubmitButton({ icon: Icon, isPending, pendingLabel, disabled, children, ...rest }: SubmitButtonProps) {
  return (
    <Button type="submit" variant="primary" disabled={disabled || isPending} {...rest}>
      <Icon aria-hidden className="size-4" />
      {isPending ? pendingLabel : children}
    </Button>
  );
}
