import type { ButtonHTMLAttributes } from "react";

const variants = {
  primary: "bg-strand-700 text-white hover:bg-strand-800 disabled:bg-ink-300",
  secondary: "bg-white text-ink-900 border border-ink-300 hover:bg-ink-50 disabled:text-ink-400",
  danger: "bg-alarm-700 text-white hover:bg-ember-700 disabled:bg-ink-300",
  ghost: "bg-transparent text-ink-800 hover:bg-ink-100",
} as const;

const sizes = {
  md: "min-h-11 px-4 text-sm",
  /** Inspector screens: at least 48 px for gloved fingers. */
  lg: "min-h-14 px-6 text-base",
} as const;

export interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  variant?: keyof typeof variants;
  size?: keyof typeof sizes;
}

export function Button({ variant = "primary", size = "md", className = "", type = "button", ...rest }: ButtonProps) {
  return (
    <button
      type={type}
      className={`inline-flex items-center justify-center gap-2 rounded-md font-semibold transition-colors disabled:cursor-not-allowed ${variants[variant]} ${sizes[size]} ${className}`}
      {...rest}
    />
  );
}
