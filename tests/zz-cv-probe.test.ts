import { it } from "vitest";
it("probe", async () => {
  const t = performance.now();
  console.log("start");
  const mod = (await import("@techstark/opencv-js")).default as any;
  console.log("imported", (performance.now() - t).toFixed(0), typeof mod, typeof mod?.then, typeof mod?.Mat, Object.keys(mod ?? {}).length);
  await new Promise<void>((resolve) => { mod.then(() => { console.log("then cb", typeof mod.Mat); resolve(); }); setTimeout(() => { console.log("timeout; Mat:", typeof mod.Mat); resolve(); }, 20000); });
}, 60000);
