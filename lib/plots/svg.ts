/**
 * A small SVG writer: plots are built as strings in plain TypeScript, so the same drawing is
 * shown on the page, downloaded as SVG, rasterised to PNG and printed in the report.
 */

export function escapeXml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&apos;");
}

type AttributeValue = string | number | null | undefined | false;

/** Rounds coordinates to 0.01 px: smaller files, identical rendering. */
function attributeText(value: Exclude<AttributeValue, null | undefined | false>): string {
  return typeof value === "number" ? String(Math.round(value * 100) / 100) : escapeXml(value);
}

export function element(name: string, attributes: Record<string, AttributeValue>, children: string | string[] = ""): string {
  const attrs = Object.entries(attributes)
    .filter(([, v]) => v !== null && v !== undefined && v !== false)
    .map(([k, v]) => ` ${k}="${attributeText(v as string | number)}"`)
    .join("");
  const body = Array.isArray(children) ? children.join("") : children;
  return body === "" ? `<${name}${attrs}/>` : `<${name}${attrs}>${body}</${name}>`;
}

export function text(content: string, attributes: Record<string, AttributeValue>): string {
  return element("text", attributes, escapeXml(content));
}

export interface SvgDocumentOptions {
  width: number;
  height: number;
  /** Accessible name of the chart (becomes <title> and aria-labelledby). */
  title: string;
  /** Longer description for screen readers. */
  description: string;
  /** Unique prefix for ids inside the document. */
  idPrefix: string;
}

/** A standalone SVG document with an accessible name and description. */
export function svgDocument(options: SvgDocumentOptions, body: string[]): string {
  const titleId = `${options.idPrefix}-title`;
  const descId = `${options.idPrefix}-desc`;
  return element(
    "svg",
    {
      xmlns: "http://www.w3.org/2000/svg",
      width: options.width,
      height: options.height,
      viewBox: `0 0 ${options.width} ${options.height}`,
      role: "img",
      "aria-labelledby": `${titleId} ${descId}`,
      "font-family": "'Source Sans 3', 'Segoe UI', Helvetica, Arial, sans-serif",
      "font-size": 12,
    },
    [
      element("title", { id: titleId }, escapeXml(options.title)),
      element("desc", { id: descId }, escapeXml(options.description)),
      element("rect", { x: 0, y: 0, width: options.width, height: options.height, fill: "#ffffff" }),
      ...body,
    ],
  );
}

/**
 * Approximate rendered width of a label in px at `fontSize` (average glyph width of a
 * humanist sans). Used to truncate labels so they never run into the next column.
 */
export function approximateTextWidth(label: string, fontSize = 12): number {
  return label.length * fontSize * 0.53;
}

/** The label cut with an ellipsis so it fits `maxWidth` px. */
export function fitLabel(label: string, maxWidth: number, fontSize = 12): string {
  if (approximateTextWidth(label, fontSize) <= maxWidth) return label;
  const keep = Math.max(1, Math.floor(maxWidth / (fontSize * 0.53)) - 1);
  return `${label.slice(0, keep)}…`;
}

/**
 * Breaks `content` into lines of at most `maxWidth` px (approximate widths, as fitLabel), at
 * spaces; a word longer than a line is kept whole. Example: wrapText("a b c", 20, 12) -> ["a b", "c"].
 */
export function wrapText(content: string, maxWidth: number, fontSize = 12): string[] {
  const lines: string[] = [];
  let line = "";
  for (const word of content.split(/\s+/).filter(Boolean)) {
    const candidate = line ? `${line} ${word}` : word;
    if (line && approximateTextWidth(candidate, fontSize) > maxWidth) {
      lines.push(line);
      line = word;
    } else {
      line = candidate;
    }
  }
  if (line) lines.push(line);
  return lines;
}
