/**
 * Whether a key press lands where someone is typing (a text field, a text area, a select or an
 * editable element), so a page's single-key shortcuts leave it alone. Sliders, radios, checkboxes
 * and buttons are not typing.
 */
export function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable || target.tagName === "TEXTAREA" || target.tagName === "SELECT") return true;
  if (target.tagName !== "INPUT") return false;
  return !["range", "radio", "checkbox", "button"].includes((target as HTMLInputElement).type);
}
