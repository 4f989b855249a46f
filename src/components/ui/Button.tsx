import type { ButtonHTMLAttributes, Ref } from "react";

type Tone = "primary" | "plain" | "danger";

const TONES: Record<Tone, string> = {
  primary: "bg-brass text-panel-950 hover:bg-brass-soft border-brass",
  plain: "bg-panel-800 text-ink hover:bg-panel-700 border-panel-600",
  danger: "bg-aspect-danger/90 text-white hover:bg-aspect-danger border-aspect-danger",
};

interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  tone?: Tone;
  ref?: Ref<HTMLButtonElement>;
}

export function Button({ tone = "plain", className = "", type = "button", ...rest }: ButtonProps) {
  return (
    <button
      type={type}
      className={`rounded-md border px-3 py-1.5 text-sm font-semibold transition-colors ${TONES[tone]} ${className}`}
      {...rest}
    />
  );
}
