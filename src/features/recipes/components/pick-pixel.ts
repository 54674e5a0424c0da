/** Side of the square averaged around a picked point, in preview pixels (odd: centred). */
export const PICK_AREA = 5;

/**
 * The sRGB colour under a point of an image, averaged over PICK_AREA × PICK_AREA pixels so a
 * speck of dust or paper grain does not decide the white balance. `x` and `y` are fractions
 * 0–1 of the image's width and height. Reads the image at its own size through a canvas (a data
 * URL from the server, so the canvas is never tainted).
 */
export function pickColour(image: HTMLImageElement, x: number, y: number): [number, number, number] | null {
  const width = image.naturalWidth;
  const height = image.naturalHeight;
  if (!width || !height) return null;
  const canvas = document.createElement("canvas");
  canvas.width = width;
  canvas.height = height;
  const context = canvas.getContext("2d", { willReadFrequently: true });
  if (!context) return null;
  context.drawImage(image, 0, 0);
  const half = Math.floor(PICK_AREA / 2);
  const cx = Math.min(width - 1, Math.max(0, Math.floor(x * width)));
  const cy = Math.min(height - 1, Math.max(0, Math.floor(y * height)));
  const left = Math.max(0, cx - half);
  const top = Math.max(0, cy - half);
  const w = Math.min(width, cx + half + 1) - left;
  const h = Math.min(height, cy + half + 1) - top;
  const { data } = context.getImageData(left, top, w, h);
  const sum = [0, 0, 0];
  for (let i = 0; i < data.length; i += 4) {
    sum[0]! += data[i]!;
    sum[1]! += data[i + 1]!;
    sum[2]! += data[i + 2]!;
  }
  const n = data.length / 4;
  return [Math.round(sum[0]! / n), Math.round(sum[1]! / n), Math.round(sum[2]! / n)];
}
