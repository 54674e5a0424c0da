export { boxHeight, KIND_HINTS, KIND_LABELS, KIND_ORDER, paperLabel, plural, presetLine } from "../../lib/preset-text";
