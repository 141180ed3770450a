"use client";

import { useCallback } from "react";

/** CSS pixels are 1/96 inch: a 300 dpi raster draws each CSS pixel as 300/96 device pixels. */
const PNG_SCALE = 300 / 96;

function download(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = fileName;
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

async function svgToPng(svg: string): Promise<Blob> {
  const image = new Image();
  const url = URL.createObjectURL(new Blob([svg], { type: "image/svg+xml" }));
  try {
    await new Promise<void>((resolve, reject) => {
      image.onload = () => resolve();
      image.onerror = () => reject(new Error("the chart could not be rasterised"));
      image.src = url;
    });
    const canvas = document.createElement("canvas");
    canvas.width = Math.round(image.width * PNG_SCALE);
    canvas.height = Math.round(image.height * PNG_SCALE);
    const context = canvas.getContext("2d");
    if (!context) throw new Error("this browser cannot draw to a canvas");
    context.scale(PNG_SCALE, PNG_SCALE);
    context.drawImage(image, 0, 0);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((blob) => (blob ? resolve(blob) : reject(new Error("PNG encoding failed"))), "image/png"));
  } finally {
    URL.revokeObjectURL(url);
  }
}

export interface ChartFigureProps {
  /** The chart as a standalone SVG document (built in lib/plots). */
  svg: string;
  /** The data behind the chart, as CSV text. */
  csv: string;
  /** Base name for the downloaded files, without extension. */
  fileName: string;
  caption: string;
}

/**
 * A chart with its downloads: SVG as drawn, PNG at 300 dpi, and the data behind it as CSV.
 * The SVG carries its own accessible name (title and desc).
 */
export function ChartFigure({ svg, csv, fileName, caption }: ChartFigureProps) {
  const onSvg = useCallback(() => download(new Blob([svg], { type: "image/svg+xml" }), `${fileName}.svg`), [svg, fileName]);
  const onCsv = useCallback(() => download(new Blob([csv], { type: "text/csv" }), `${fileName}.csv`), [csv, fileName]);
  const onPng = useCallback(async () => download(await svgToPng(svg), `${fileName}.png`), [svg, fileName]);
  return (
    <figure className="chart">
      {/* Focusable so the keyboard can scroll a chart larger than its box. */}
      <div className="chart-scroll" tabIndex={0} role="group" aria-label={`${caption} (scrolls)`} dangerouslySetInnerHTML={{ __html: svg }} />
      <figcaption>
        {caption}
        <span className="chart-downloads" role="group" aria-label={`Download ${caption}`}>
          <button type="button" className="quiet" onClick={onSvg}>SVG</button>
          <button type="button" className="quiet" onClick={() => void onPng()}>PNG (300 dpi)</button>
          <button type="button" className="quiet" onClick={onCsv}>Data (CSV)</button>
        </span>
      </figcaption>
    </figure>
  );
}
