import { useState } from "react";
import type { LengthUnit } from "../format";

const STORAGE_KEY = "platen.lengthUnit";

function stored(): LengthUnit {
  try {
    return localStorage.getItem(STORAGE_KEY) === "in" ? "in" : "mm";
  } catch {
    return "mm";
  }
}

/** Millimetres or inches for fragment sizes, remembered in this browser. */
export function useLengthUnit(): [LengthUnit, (unit: LengthUnit) => void] {
  const [unit, setUnit] = useState<LengthUnit>(stored);
  const choose = (next: LengthUnit) => {
    setUnit(next);
    try {
      localStorage.setItem(STORAGE_KEY, next);
    } catch {
      // Private windows may refuse storage; the choice then lasts for this page.
    }
  };
  return [unit, choose];
}
