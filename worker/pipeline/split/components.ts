/**
 * Connected components of a binary mask, 8-connected (diagonal neighbours join), labelled in
 * raster order of their first pixel: label 1 is the component whose top-left-most pixel comes
 * first row by row. Label 0 is the unset background.
 */
export interface Component {
  label: number;
  /** Pixels. */
  area: number;
  /** Inclusive pixel bounds. */
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
  /** Index of the component's first pixel in raster order (always on its outer edge). */
  first: number;
  /** True when any pixel lies on the image's outer row or column. */
  touchesBorder: boolean;
}

export interface Labelling {
  labels: Int32Array;
  components: Component[];
}

/**
 * Labels the set pixels of `mask` (width × height) by 8-connectivity.
 * Example: two squares touching only at a corner → one component; 2 px apart → two.
 */
export function labelComponents(mask: Uint8Array, width: number, height: number): Labelling {
  const labels = new Int32Array(mask.length);
  const queue = new Int32Array(mask.length);
  const components: Component[] = [];
  for (let start = 0; start < mask.length; start++) {
    if (!mask[start] || labels[start]) continue;
    const label = components.length + 1;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    labels[start] = label;
    let minX = width,
      minY = height,
      maxX = -1,
      maxY = -1;
    while (head < tail) {
      const i = queue[head++]!;
      const x = i % width;
      const y = (i - x) / width;
      if (x < minX) minX = x;
      if (x > maxX) maxX = x;
      if (y < minY) minY = y;
      if (y > maxY) maxY = y;
      const x0 = x > 0 ? -1 : 0;
      const x1 = x < width - 1 ? 1 : 0;
      const y0 = y > 0 ? -1 : 0;
      const y1 = y < height - 1 ? 1 : 0;
      for (let dy = y0; dy <= y1; dy++) {
        const row = i + dy * width;
        for (let dx = x0; dx <= x1; dx++) {
          const j = row + dx;
          if (mask[j] && !labels[j]) {
            labels[j] = label;
            queue[tail++] = j;
          }
        }
      }
    }
    components.push({
      label,
      area: tail,
      minX,
      minY,
      maxX,
      maxY,
      first: start,
      touchesBorder: minX === 0 || minY === 0 || maxX === width - 1 || maxY === height - 1,
    });
  }
  return { labels, components };
}
