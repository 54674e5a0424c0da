import { createRequire } from "node:module";
import { it } from "vitest";
it("probe", async () => {
  const t = performance.now();
  const mod = createRequire(import.meta.url)("@techstark/opencv-js");
  console.log("required", (performance.now() - t).toFixed(0), typeof mod, typeof mod?.then, typeof mod?.Mat);
  await new Promise<void>((resolve) => { mod.then(() => { console.log("then cb", typeof mod.Mat, (performance.now() - t).toFixed(0)); resolve(); }); });
}, 60000);
