/**
 * Exports of a plot in the browser: the figure's one SVG (raster layers are already `<image>` elements with data
 * URLs) drawn onto a canvas as PNG, and text as a CSV download. Browser-only: call from event handlers.
 */

/** Presentation properties copied from the page's computed style, so CSS variables and classes survive export. */
const STYLE_PROPERTIES = [
  "fill",
  "fill-opacity",
  "stroke",
  "stroke-width",
  "stroke-opacity",
  "stroke-dasharray",
  "opacity",
  "color",
  "font-family",
  "font-size",
  "font-weight",
  "text-anchor",
  "dominant-baseline",
  "visibility",
  "display",
  // visx's Text draws each label in a nested <svg> with overflow visible: without it, labels left of x = 0 vanish.
  "overflow",
] as const;

export function downloadBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = fileName;
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

export function downloadText(text: string, fileName: string, type = "text/csv;charset=utf-8"): void {
  downloadBlob(new Blob([text], { type }), fileName);
}

/** The first opaque background behind an element (the surface the plot sits on), as a CSS colour. */
function backgroundBehind(element: Element): string {
  for (let node: Element | null = element; node; node = node.parentElement) {
    const colour = getComputedStyle(node).backgroundColor;
    if (colour && colour !== "transparent" && !/rgba\(.*,\s*0\)$/.test(colour)) return colour;
  }
  return "#ffffff";
}

/** Words of `text` in lines of at most `width` characters. */
function wrap(text: string, width: number): string[] {
  const lines: string[] = [];
  let line = "";
  for (const word of text.split(/\s+/)) {
    if (line && line.length + 1 + word.length > width) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(line);
  return lines;
}

/**
 * A PNG of one SVG as the page shows it: computed styles inlined on a copy, the page's background behind it, and
 * `footer` lines (the notice on surrogate results) under it. `scale` 2 gives a sharp image on paper and screens.
 */
export async function svgToPng(svg: SVGSVGElement, options: { footer?: string | null; scale?: number } = {}): Promise<Blob> {
  const scale = options.scale ?? 2;
  const width = svg.width.baseVal.value;
  const height = svg.height.baseVal.value;
  const copy = svg.cloneNode(true) as SVGSVGElement;
  const sources = [svg, ...svg.querySelectorAll("*")];
  const targets = [copy, ...copy.querySelectorAll("*")];
  sources.forEach((source, i) => {
    const computed = getComputedStyle(source);
    const target = targets[i] as SVGElement;
    target.removeAttribute("class");
    target.setAttribute("style", STYLE_PROPERTIES.map((p) => `${p}:${computed.getPropertyValue(p)}`).join(";"));
  });
  const ink = getComputedStyle(svg).color;
  const footer = options.footer ? wrap(options.footer, Math.max(40, Math.floor(width / 5.6))) : [];
  const footerHeight = footer.length ? footer.length * 13 + 10 : 0;
  const total = height + footerHeight;
  copy.setAttribute("xmlns", "http://www.w3.org/2000/svg");
  copy.setAttribute("width", String(width));
  copy.setAttribute("height", String(total));
  copy.setAttribute("viewBox", `0 0 ${width} ${total}`);
  const ns = "http://www.w3.org/2000/svg";
  const background = document.createElementNS(ns, "rect");
  background.setAttribute("width", "100%");
  background.setAttribute("height", "100%");
  background.setAttribute("fill", backgroundBehind(svg));
  copy.insertBefore(background, copy.firstChild);
  footer.forEach((line, i) => {
    const text = document.createElementNS(ns, "text");
    text.setAttribute("x", "4");
    text.setAttribute("y", String(height + 14 + i * 13));
    text.setAttribute("style", `fill:${ink};font-size:10px;font-family:sans-serif`);
    text.textContent = line;
    copy.append(text);
  });
  const image = new Image();
  image.src = `data:image/svg+xml;charset=utf-8,${encodeURIComponent(new XMLSerializer().serializeToString(copy))}`;
  await image.decode();
  const canvas = document.createElement("canvas");
  canvas.width = Math.round(width * scale);
  canvas.height = Math.round(total * scale);
  const context = canvas.getContext("2d");
  if (!context) throw new Error("this browser gives no 2-D canvas");
  context.scale(scale, scale);
  context.drawImage(image, 0, 0, width, total);
  return new Promise((resolve, reject) => canvas.toBlob((blob) => (blob ? resolve(blob) : reject(new Error("the PNG could not be made"))), "image/png"));
}

/** `rgb(var(--sp-<name>))` resolved for a canvas, which cannot read CSS variables. */
export function themeColour(name: string, alpha = 1): string {
  const triple = getComputedStyle(document.documentElement).getPropertyValue(`--sp-${name}`).trim();
  const parts = triple.split(/\s+/).map(Number);
  if (parts.length !== 3 || parts.some((p) => !Number.isFinite(p))) return alpha === 1 ? "#808080" : `rgba(128,128,128,${alpha})`;
  return `rgba(${parts[0]},${parts[1]},${parts[2]},${alpha})`;
}

/** A data URL of a canvas drawn by `draw` at `width x height` device pixels. */
export function rasterDataUrl(width: number, height: number, draw: (context: CanvasRenderingContext2D) => void): string {
  const canvas = document.createElement("canvas");
  canvas.width = Math.max(1, Math.round(width));
  canvas.height = Math.max(1, Math.round(height));
  const context = canvas.getContext("2d");
  if (!context) return "";
  draw(context);
  return canvas.toDataURL("image/png");
}
