import type { InputHTMLAttributes, ReactNode, SelectHTMLAttributes, TextareaHTMLAttributes } from "react";

const control = "block w-full min-h-12 rounded-lg border-2 border-line-strong bg-sheet px-3 py-2 text-ink aria-[invalid=true]:border-disagrees-ink";

interface FieldShell {
  label: ReactNode;
  name: string;
  hint?: ReactNode;
  error?: string | string[] | null;
  unit?: string;
}

function errorText(error: FieldShell["error"]) {
  if (!error) return null;
  return Array.isArray(error) ? error[0] : error;
}

/** The ids that describe a control: its hint (kept when there is an error too) and its error. */
function describedBy(name: string, hint: ReactNode, message: string | null | undefined) {
  const ids = [hint ? `${name}-hint` : null, message ? `${name}-error` : null].filter(Boolean);
  return ids.length ? ids.join(" ") : undefined;
}

function Shell({ label, name, hint, error, children }: FieldShell & { children: ReactNode }) {
  const message = errorText(error);
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={name} className="font-bold">
        {label}
      </label>
      {children}
      {hint ? (
        <p id={`${name}-hint`} className="text-sm text-muted">
          {hint}
        </p>
      ) : null}
      {message ? (
        <p id={`${name}-error`} className="text-sm font-bold text-disagrees-ink" role="alert">
          {message}
        </p>
      ) : null}
    </div>
  );
}

export function TextField({ label, name, hint, error, unit, ...input }: FieldShell & InputHTMLAttributes<HTMLInputElement>) {
  const message = errorText(error);
  return (
    <Shell label={label} name={name} hint={hint} error={error}>
      <div className="flex items-center gap-2">
        <input
          id={name}
          name={name}
          aria-invalid={message ? true : undefined}
          aria-describedby={describedBy(name, hint, message)}
          className={control}
          {...input}
        />
        {unit ? <span className="min-w-12 text-muted">{unit}</span> : null}
      </div>
    </Shell>
  );
}

/** One option of a SelectField. */
export interface Choice {
  value: string | number;
  label: ReactNode;
}

/** Choices from a fixed list of values and their labels (a kind, a state, a role). */
export function choicesOf<V extends string>(values: readonly V[], labels: Readonly<Record<V, ReactNode>>): Choice[] {
  return values.map((value) => ({ value, label: labels[value] }));
}

/** Choices of rows picked by their id and shown by their name (a table, an item, a person). */
export function choicesByName(rows: readonly { id: number; name: string }[]): Choice[] {
  return rows.map((row) => ({ value: row.id, label: row.name }));
}

/**
 * A labelled select. Its options are `choices`, after a first empty option reading `blank` when
 * given ("Any state" in a filter, "Choose…" in a form); `children` come after them.
 */
export function SelectField({
  label,
  name,
  hint,
  error,
  choices,
  blank,
  children,
  ...select
}: FieldShell & SelectHTMLAttributes<HTMLSelectElement> & { choices?: readonly Choice[]; blank?: string }) {
  const message = errorText(error);
  return (
    <Shell label={label} name={name} hint={hint} error={error}>
      <select
        id={name}
        name={name}
        aria-invalid={message ? true : undefined}
        aria-describedby={describedBy(name, hint, message)}
        className={control}
        {...select}
      >
        {blank !== undefined ? <option value="">{blank}</option> : null}
        {choices?.map((c) => (
          <option key={c.value} value={c.value}>
            {c.label}
          </option>
        ))}
        {children}
      </select>
    </Shell>
  );
}

export function TextAreaField({ label, name, hint, error, ...area }: FieldShell & TextareaHTMLAttributes<HTMLTextAreaElement>) {
  const message = errorText(error);
  return (
    <Shell label={label} name={name} hint={hint} error={error}>
      <textarea
        id={name}
        name={name}
        aria-invalid={message ? true : undefined}
        aria-describedby={describedBy(name, hint, message)}
        className={`${control} min-h-24`}
        {...area}
      />
    </Shell>
  );
}
