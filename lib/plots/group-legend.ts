import { element, text } from "./svg";
import { INK } from "./palette";

const ROW = 16;

/**
 * A legend of colour groups (species, in italics) in rows that wrap at `maxWidth` px, starting
 * at (x, y) for the first row's baseline. Returns the SVG fragments and the rows used.
 */
export function groupLegend(groups: readonly string[], colourOf: (group: string) => string, x: number, y: number, maxWidth: number): { parts: string[]; rows: number } {
  const parts: string[] = [];
  let cursor = x;
  let row = 0;
  for (const group of groups) {
    const width = 28 + group.length * 6;
    if (cursor > x && cursor + width > x + maxWidth) {
      row += 1;
      cursor = x;
    }
    const baseline = y + row * ROW;
    parts.push(element("circle", { cx: cursor + 5, cy: baseline - 4, r: 5, fill: colourOf(group) }));
    parts.push(text(group, { x: cursor + 14, y: baseline, "font-size": 11, "font-style": "italic", fill: INK }));
    cursor += width;
  }
  return { parts: [element("g", { class: "group-legend" }, parts)], rows: groups.length ? row + 1 : 0 };
}

/** Height in px of `rows` legend rows. */
export function legendHeight(rows: number): number {
  return rows * ROW;
}
