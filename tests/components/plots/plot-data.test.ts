import { describe, expect, it } from "vitest";
import {
  colourDomain,
  exportFileName,
  heatmapTable,
  histogramBins,
  logTicks,
  nodeAtPixel,
  peakNode,
  plotCsv,
  rampScale,
  SEQUENTIAL_RAMP,
  toCsv,
} from "@/components/plots/plot-data";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";

/** RFC 4180 parsing of the plain (unquoted) rows the numeric exports write, comment lines set apart. */
function parse(csv: string): { comments: string[]; header: string[]; rows: string[][] } {
  const lines = csv.split("\r\n").filter((l) => l !== "");
  const comments = lines.filter((l) => l.startsWith("# ")).map((l) => l.slice(2));
  const [header, ...rows] = lines.filter((l) => !l.startsWith("# ")).map((l) => l.split(","));
  return { comments, header, rows };
}

describe("colour domains", () => {
  it("a signed map's bar is symmetric about zero and reaches the largest |value|", () => {
    // Values -0.3 ... 0.7: the largest magnitude is 0.7, so the bar is [-0.7, 0.7] and zero is its middle.
    expect(colourDomain("signed", [-0.3, 0.2, null, 0.7])).toEqual([-0.7, 0.7]);
    expect(colourDomain("signed", [-2, 1], [0.5, -0.25])).toEqual([-2, 2]);
  });

  it("a magnitude map's bar starts at zero and reaches the largest value", () => {
    expect(colourDomain("magnitude", [0.1, 0.4, null], [0.05])).toEqual([0, 0.4]);
  });

  it("covers every value of random maps (property over 200 draws)", () => {
    let seed = 7;
    const next = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31) * 2 - 1;
    for (let draw = 0; draw < 200; draw++) {
      const a = Array.from({ length: 30 }, () => next() * 10 ** Math.round(next() * 6));
      const b = Array.from({ length: 30 }, () => next());
      const [lo, hi] = colourDomain("signed", a, b);
      expect(lo).toBe(-hi);
      for (const v of [...a, ...b]) expect(v >= lo && v <= hi).toBe(true);
      const magnitudes = a.map(Math.abs);
      const [mLo, mHi] = colourDomain("magnitude", magnitudes);
      expect(mLo).toBe(0);
      for (const v of magnitudes) expect(v <= mHi).toBe(true);
    }
  });

  it("all-zero, empty and undefined maps still get a bar of length", () => {
    expect(colourDomain("signed", [0, 0])).toEqual([-1, 1]);
    expect(colourDomain("magnitude", [])).toEqual([0, 1]);
    expect(colourDomain("magnitude", [null, NaN])).toEqual([0, 1]);
  });

  it("the ramp's ends are the domain's ends and values beyond are clamped", () => {
    const colour = rampScale(SEQUENTIAL_RAMP, 0, 2);
    // d3-interpolate writes colours as rgb(r, g, b): #1c2640 is (28, 38, 64), #fbf6e4 is (251, 246, 228).
    expect(colour(0)).toBe("rgb(28, 38, 64)");
    expect(colour(2)).toBe("rgb(251, 246, 228)");
    expect(colour(5)).toBe(colour(2));
  });
});

describe("nodes", () => {
  it("finds the node under a pointer with θy up", () => {
    // A 5 x 5 map 100 px square: 20 px per cell; the top-left cell is ix 0 and the top row iy 4.
    expect(nodeAtPixel(5, 100, 1, 1)).toEqual({ ix: 0, iy: 4 });
    expect(nodeAtPixel(5, 100, 99.9, 99.9)).toEqual({ ix: 4, iy: 0 });
    expect(nodeAtPixel(5, 100, 50, 50)).toEqual({ ix: 2, iy: 2 });
    expect(nodeAtPixel(5, 100, 100, 10)).toBeNull();
    expect(nodeAtPixel(5, 100, -1, 10)).toBeNull();
  });

  it("the peak of a signed map is the largest |value|, of a magnitude the largest value", () => {
    expect(peakNode("signed", 2, [0.1, -0.9, 0.5, null])).toEqual({ ix: 1, iy: 0, value: -0.9 });
    expect(peakNode("magnitude", 2, [0.1, 0.2, 0.5, null])).toEqual({ ix: 0, iy: 1, value: 0.5 });
    expect(peakNode("signed", 2, [null, null, null, null])).toBeNull();
  });
});

describe("histogram bins", () => {
  it("counts every value once in equal-width bins, the last closed", () => {
    // [0, 4] in 4 bins of width 1: 0 and 0.5 -> bin 0; 1 -> bin 1; 3.5 and 4 -> bin 3.
    const bins = histogramBins([0, 0.5, 1, 3.5, 4], { binCount: 4 });
    expect(bins.map((b) => [b.lo, b.hi, b.count])).toEqual([
      [0, 1, 2],
      [1, 2, 1],
      [2, 3, 0],
      [3, 4, 2],
    ]);
  });

  it("takes Sturges' bin count by default", () => {
    // Sturges (1926): k = ceil(log2 n) + 1; n = 1250 (two 25 x 25 maps) -> ceil(10.29) + 1 = 12.
    expect(histogramBins(Array.from({ length: 1250 }, (_, i) => i))).toHaveLength(12);
    expect(histogramBins(Array.from({ length: 1250 }, (_, i) => i)).reduce((s, b) => s + b.count, 0)).toBe(1250);
  });

  it("leaves out values outside a given range and non-finite ones", () => {
    const bins = histogramBins([-1, 0.2, 0.7, 2, NaN, Infinity], { binCount: 2, lo: 0, hi: 1 });
    expect(bins.map((b) => b.count)).toEqual([1, 1]);
  });

  it("refuses a bin count that is not a positive integer", () => {
    expect(() => histogramBins([1, 2], { binCount: 0 })).toThrow(new RangeError("binCount must be a positive integer"));
    expect(() => histogramBins([1, 2], { binCount: 1.5 })).toThrow(new RangeError("binCount must be a positive integer"));
  });

  it("gives a constant set one bin of width 1 holding it all", () => {
    expect(histogramBins([3, 3, 3], { binCount: 1 })).toEqual([{ lo: 3, hi: 4, count: 3 }]);
  });
});

describe("CSV", () => {
  it("writes comments, header and rows in RFC 4180 fields with CRLF line ends", () => {
    const csv = toCsv({ comments: ["what it is"], columns: ["label", "value"], rows: [["B_4,5", 0.1], ['say "hi"', null], ["#4", 1e-20]] });
    // RFC 4180, section 2: fields holding commas or quotes are quoted, quotes doubled; lines end in CRLF.
    expect(csv).toBe('# what it is\r\nlabel,value\r\n"B_4,5",0.1\r\n"say ""hi""",\r\n"#4",1e-20\r\n');
  });

  it("surrogate numbers carry the notice as their last comment line", () => {
    const table = { comments: ["a plot"], columns: ["x"], rows: [[1]] };
    expect(parse(plotCsv(table, true)).comments).toEqual(["a plot", SURROGATE_NOTICE]);
    expect(parse(plotCsv(table, false)).comments).toEqual(["a plot"]);
  });

  it("a map's rows run over ix fastest, with θ from the grid, and parse back to the exact numbers", () => {
    const theta = [-60, 0, 60];
    const values = [0.1, 0.2, 0.3, 0.4, 1 / 3, null, 7e-9, -2.5, Math.PI];
    const { header, rows } = parse(plotCsv(heatmapTable("t", "pm/nrad", theta, [{ label: "c_x", title: "c_x", values }]), true));
    expect(header).toEqual(["ix", "iy", "theta_x_nrad", "theta_y_nrad", "c_x"]);
    expect(rows).toHaveLength(9);
    expect(rows[5]).toEqual(["2", "1", "60", "0", ""]);
    // String(x) is the shortest round-trip form (ECMA-262 Number::toString), so Number(cell) === x exactly.
    rows.forEach((row, i) => {
      if (values[i] !== null) expect(Number(row[4])).toBe(values[i]);
    });
  });

  it("names export files after the plot", () => {
    expect(exportFileName("Largest |error| per node, both axes", "csv")).toBe("largest-error-per-node-both-axes.csv");
    expect(exportFileName("", "png")).toBe("plot.png");
  });
});

describe("log axis ticks", () => {
  it("are the powers of ten inside a range of two decades or more", () => {
    expect(logTicks(0.003, 20)).toEqual([0.01, 0.1, 1, 10]);
    expect(logTicks(1, 100)).toEqual([1, 10, 100]);
  });
  it("are 1, 2, 5 times powers of ten inside a narrower range", () => {
    // 0.0025 ... 0.077: inside lie 0.005, 0.01, 0.02, 0.05 (one power of ten only).
    expect(logTicks(0.0025, 0.077)).toEqual([0.005, 0.01, 0.02, 0.05]);
    // 3 ... 4.5 holds no 1-2-5 value: every integer mantissa, 3 and 4.
    expect(logTicks(3, 4.5)).toEqual([3, 4]);
  });
  it("fall back to the range's ends, or none for a range that is not positive", () => {
    expect(logTicks(3.1, 3.9)).toEqual([3.1, 3.9]);
    expect(logTicks(0, 50)).toBeNull();
    expect(logTicks(5, 5)).toBeNull();
  });
});
