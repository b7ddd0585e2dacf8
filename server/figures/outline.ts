/**
 * Turns a figure's text into outlines so the file looks the same on a
 * machine without the product's fonts: the SVG is read by resvg's usvg
 * with only the fonts in assets/fonts (no system fonts), which writes every
 * glyph as a path. usvg drops what it does not draw — the root's size in
 * millimetres, <title>, <desc>, classes, data- and aria- attributes — so
 * they are put back: the root is rewritten and each kept group (found by
 * its id) gets its attributes again. Also renders PNGs with the same fonts.
 * Costs tens of milliseconds: call from a worker thread (figure-task.ts).
 */
import { fileURLToPath } from "node:url";
import { Resvg } from "@resvg/resvg-js";
import { escapeXml } from "./svg-writer";

const fontDir = fileURLToPath(new URL("../../assets/fonts/", import.meta.url));

/** The font files figures are drawn with (the product's own, shipped in assets/fonts). */
export const figureFontFiles = [
  "Inter_400Regular.ttf",
  "Inter_600SemiBold.ttf",
  "Inter_700Bold.ttf",
].map((f) => fontDir + f);

const fontOptions = {
  fontFiles: figureFontFiles,
  loadSystemFonts: false,
  defaultFontFamily: "Inter",
};

/** What outlining needs besides the SVG: the ids and attributes to put back. */
export type KeptById = Record<string, Record<string, string>>;

/**
 * The SVG with every text drawn as paths, the root element and its
 * <title>/<desc> as in `svg`, and the kept attributes back on their groups.
 */
export function outlineSvg(svg: string, kept: KeptById): string {
  const root = /^<svg[^>]*>/.exec(svg);
  if (!root) throw new Error("outlineSvg: the figure does not start with an <svg> element");
  const head = /<title[\s\S]*?<\/desc>/.exec(svg)?.[0] ?? "";
  const simplified = new Resvg(svg, { font: fontOptions }).toString();
  const body = simplified
    .replace(/^<svg[^>]*>/, "")
    .replace(/<\/svg>\s*$/, "")
    .replace(/<g id="(fig-\d+)"/g, (whole, id: string) => {
      const attrs = kept[id];
      if (!attrs) return whole;
      const extra = Object.entries(attrs)
        .map(([k, v]) => ` ${k}="${escapeXml(v)}"`)
        .join("");
      return `<g id="${id}"${extra}`;
    });
  return `${root[0]}${head}${body}</svg>\n`;
}

/** The figure drawn as a PNG `widthPx` pixels wide (height in proportion), without its resolution chunk. */
export function renderPng(svg: string, widthPx: number): Buffer {
  const image = new Resvg(svg, {
    font: fontOptions,
    fitTo: { mode: "width", value: widthPx },
    background: "#FFFFFF",
  }).render();
  return Buffer.from(image.asPng());
}
