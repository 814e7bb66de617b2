import { useId, type InputHTMLAttributes, type ReactNode, type Ref, type SelectHTMLAttributes, type TextareaHTMLAttributes } from "react";

const CONTROL =
  "w-full rounded border border-line-strong bg-surface px-2.5 py-1.5 text-ink placeholder:text-ink-muted/80 disabled:bg-sunken disabled:text-ink-muted";

function Label({ htmlFor, children, hint }: { htmlFor: string; children: ReactNode; hint?: ReactNode }) {
  return (
    <label htmlFor={htmlFor} className="mb-1 block text-sm font-medium text-ink">
      {children}
      {hint && <span className="ml-1 font-normal text-ink-muted">{hint}</span>}
    </label>
  );
}

type TextFieldProps = InputHTMLAttributes<HTMLInputElement> & { label: ReactNode; hint?: ReactNode; ref?: Ref<HTMLInputElement> };

export function TextField({ label, hint, className, id, ...input }: TextFieldProps) {
  const generated = useId();
  const inputId = id ?? generated;
  return (
    <div className={className}>
      <Label htmlFor={inputId} hint={hint}>
        {label}
      </Label>
      <input id={inputId} className={`${CONTROL} h-9`} {...input} />
    </div>
  );
}

type SelectFieldProps = SelectHTMLAttributes<HTMLSelectElement> & { label: ReactNode; children: ReactNode };

export function SelectField({ label, className, id, children, ...select }: SelectFieldProps) {
  const generated = useId();
  const selectId = id ?? generated;
  return (
    <div className={className}>
      <Label htmlFor={selectId}>{label}</Label>
      <select id={selectId} className={`${CONTROL} h-9`} {...select}>
        {children}
      </select>
    </div>
  );
}

type TextAreaFieldProps = TextareaHTMLAttributes<HTMLTextAreaElement> & { label: ReactNode; hint?: ReactNode };

export function TextAreaField({ label, hint, className, id, ...area }: TextAreaFieldProps) {
  const generated = useId();
  const areaId = id ?? generated;
  return (
    <div className={className}>
      <Label htmlFor={areaId} hint={hint}>
        {label}
      </Label>
      <textarea id={areaId} className={CONTROL} {...area} />
    </div>
  );
}

export const buttonClass = {
  primary:
    "inline-flex items-center justify-center gap-1.5 rounded bg-harbour px-3.5 py-1.5 font-medium text-white hover:bg-harbour-strong disabled:cursor-not-allowed disabled:opacity-60",
  secondary:
    "inline-flex items-center justify-center gap-1.5 rounded border border-line-strong bg-surface px-3 py-1.5 font-medium text-ink hover:bg-sunken disabled:cursor-not-allowed disabled:opacity-60",
  danger:
    "inline-flex items-center justify-center gap-1.5 rounded border border-fail/60 bg-surface px-3 py-1.5 font-medium text-fail hover:bg-fail-soft disabled:cursor-not-allowed disabled:opacity-60",
} as const;
