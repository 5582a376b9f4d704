/** A form field's text; a file sent under that name, or no field at all, reads as `fallback`. */
export function formText(form: FormData, name: string, fallback = ""): string {
  const value = form.get(name);
  return typeof value === "string" ? value : fallback;
}
