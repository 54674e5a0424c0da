import { AUDIT_ACTIONS, type AuditEvent } from "../../../shared/schemas/audit";
import { paths } from "../../config/paths";

export const GROUP_LABELS: Record<string, string> = {
  auth: "Sign-ins and passwords",
  account: "Own account",
  invitation: "Invitations",
  offsite: "Off-site copies",
  user: "Users",
  intake: "Intakes",
  scan: "Scans",
  fragment: "Fragments",
  recipe: "Recipes",
  preset: "Presets",
  batch: "Batches",
};

export const SUBJECT_LABELS: Record<string, string> = {
  fragment: "Fragment",
  scan: "Scan",
  intake: "Intake",
  recipe: "Recipe",
  preset: "Preset",
  batch: "Batch",
  user: "User",
  invitation: "Invitation",
  studio: "Studio",
};

/** "Approved a fragment"; an action this client does not know yet shows its stable name. */
export function actionLabel(action: string): string {
  return (AUDIT_ACTIONS as Record<string, string>)[action] ?? action;
}

/** Where the subject of an event can be seen, when it has a screen. */
export function subjectPath(event: Pick<AuditEvent, "subjectType" | "subjectId">): string | null {
  const id = event.subjectId;
  if (!id) return null;
  switch (event.subjectType) {
    case "fragment":
      return paths.fragment(id);
    case "scan":
      return paths.scan(id);
    case "intake":
      return `${paths.scans}?intake=${encodeURIComponent(id)}`;
    case "recipe":
      return paths.recipe(id);
    case "preset":
      return paths.preset(id);
    case "batch":
      return paths.batch(id);
    case "user":
    case "invitation":
      return paths.users;
    default:
      return null;
  }
}

/** Who did it, in words: the account's name now, else the address it used, else Platen itself. */
export function actorLabel(event: Pick<AuditEvent, "actor" | "action">): string {
  if (event.actor.name) return event.actor.name;
  if (event.actor.email) return event.actor.email;
  return "Platen";
}

/** "sizeBytes" → "Size bytes", "defaultRecipe" → "Default recipe". */
export function fieldLabel(field: string): string {
  const words = field.replace(/([a-z0-9])([A-Z])/g, "$1 $2").toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

export type ValueView =
  | { kind: "empty" }
  | { kind: "text"; text: string }
  | { kind: "list"; items: string[] }
  | { kind: "pairs"; pairs: [string, string][] }
  | { kind: "json"; text: string };

const plain = (v: unknown): v is string | number | boolean | null =>
  v === null || typeof v === "string" || typeof v === "number" || typeof v === "boolean";
const numberText = (v: number) => (Number.isInteger(v) ? String(v) : String(Math.round(v * 1000) / 1000));

/** How one before or after value is shown: plain words where it is simple, JSON where it is not. */
export function valueView(value: unknown): ValueView {
  if (value === null || value === undefined || value === "") return { kind: "empty" };
  if (typeof value === "boolean") return { kind: "text", text: value ? "yes" : "no" };
  if (typeof value === "number") return { kind: "text", text: numberText(value) };
  if (typeof value === "string") return { kind: "text", text: value };
  if (Array.isArray(value) && value.every((v) => typeof v === "string" || typeof v === "number")) {
    return value.length ? { kind: "list", items: value.map(String) } : { kind: "empty" };
  }
  // A small flat object (a box, a rectangle, a default recipe) reads better as labelled values.
  if (value && typeof value === "object" && !Array.isArray(value)) {
    const entries = Object.entries(value);
    if (entries.length <= 8 && entries.every(([, v]) => plain(v))) {
      return {
        kind: "pairs",
        pairs: entries.map(([k, v]) => [k, v === null ? "—" : typeof v === "number" ? numberText(v) : String(v)]),
      };
    }
  }
  return { kind: "json", text: JSON.stringify(value, null, 2) };
}
