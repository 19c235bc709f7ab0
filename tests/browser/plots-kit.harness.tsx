// Bundled by plots-kit.test.ts with esbuild and opened in Chromium: the plotting kit on large inputs, with no server.
import { createRoot } from "react-dom/client";
import { RankedBarChart } from "@/components/plots/bar-chart";
import { HeatmapFigure } from "@/components/plots/heatmap";
import { LineChart } from "@/components/plots/line-chart";
import { ScatterPlot } from "@/components/plots/scatter";

const M = 101;
const theta = Array.from({ length: M }, (_, i) => -60 + (120 * i) / (M - 1));
// A smooth signed map: c = sin(θx / 20) cos(θy / 30), so the peak |c| is near 1 and node (ix, iy) is easy to check.
const mapX = Array.from({ length: M * M }, (_, n) => Math.sin(theta[n % M] / 20) * Math.cos(theta[Math.floor(n / M)] / 30));
const mapY = mapX.map((v) => -v);
const N = 10_000;
const x = Float64Array.from({ length: N }, (_, i) => (35 * i) / N);
const y = Float64Array.from(x, (v, i) => 1e-4 * v * v * (1 + 0.5 * Math.sin(i)));

const started = performance.now();
createRoot(document.getElementById("root")!).render(
  <div>
    <HeatmapFigure title="Big map" kind="signed" thetaNrad={theta} testId="big-map" maps={[{ label: "c_x", title: "c_x", values: mapX }, { label: "c_y", title: "c_y", values: mapY }]} />
    <ScatterPlot title="Many points" x={x} y={y} xLabel="total WFE (nm RMS)" yLabel="error" xColumn="x" yColumn="y" testId="many-points" limits={[{ x: 30, label: "limit" }]} stepOverlay={{ label: "worst", steps: [{ lo: 0, hi: 35, value: 0.2 }] }} />
    <LineChart title="Spectra" testId="spectra" xLabel="f (Hz)" yLabel="ASD" series={[{ label: "a", column: "a", glyph: "line", colour: "black", x: [1e-4, 1e-3, 1e-2, 1e-1], y: [1, 0.1, 0.01, 0.001] }]} />
    <RankedBarChart title="Ranked" testId="ranked" unit="pm" valueLabel="bound" items={Array.from({ length: 600 }, (_, i) => ({ label: `t${i}`, value: 1 / (i + 1), group: i % 3 ? "b" : "a" }))} groups={[{ key: "a", label: "A", colour: "teal", marked: true }, { key: "b", label: "B", colour: "grey", outline: true }]} />
  </div>,
);
requestAnimationFrame(() => setTimeout(() => ((window as unknown as { renderedMs: number }).renderedMs = performance.now() - started), 0));
