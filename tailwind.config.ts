import type { Config } from "tailwindcss";

/**
 * Stillpoint design tokens. Colours are CSS variables (app/globals.css) so light and dark
 * share one set of names; the values are chosen for at least 4.5:1 text contrast on their surfaces.
 */
const color = (name: string) => `rgb(var(--sp-${name}) / <alpha-value>)`;

const config: Config = {
  content: ["./app/**/*.{ts,tsx}", "./components/**/*.{ts,tsx}"],
  darkMode: "media",
  theme: {
    colors: {
      transparent: "transparent",
      current: "currentColor",
      canvas: color("canvas"),
      surface: color("surface"),
      sunken: color("sunken"),
      line: color("line"),
      ink: color("ink"),
      muted: color("muted"),
      accent: color("accent"),
      "accent-ink": color("accent-ink"),
      focus: color("focus"),
      good: color("good"),
      caution: color("caution"),
      fault: color("fault"),
      "fault-soft": color("fault-soft"),
    },
    fontFamily: {
      sans: ["var(--font-sans)", "system-ui", "sans-serif"],
      mono: ["var(--font-mono)", "ui-monospace", "monospace"],
    },
    // A compact scale for dense tables: 12 / 13 / 14 / 16 / 20 / 24 px.
    fontSize: {
      xs: ["0.75rem", { lineHeight: "1rem" }],
      sm: ["0.8125rem", { lineHeight: "1.125rem" }],
      base: ["0.875rem", { lineHeight: "1.25rem" }],
      md: ["1rem", { lineHeight: "1.5rem" }],
      lg: ["1.25rem", { lineHeight: "1.75rem" }],
      xl: ["1.5rem", { lineHeight: "2rem" }],
    },
    // A 4 px grid.
    spacing: {
      px: "1px",
      0: "0",
      0.5: "0.125rem",
      1: "0.25rem",
      1.5: "0.375rem",
      2: "0.5rem",
      3: "0.75rem",
      4: "1rem",
      5: "1.25rem",
      6: "1.5rem",
      8: "2rem",
      10: "2.5rem",
      12: "3rem",
      16: "4rem",
      24: "6rem",
      72: "18rem",
      96: "24rem",
    },
    borderRadius: {
      none: "0",
      sm: "2px",
      DEFAULT: "3px",
      md: "4px",
      full: "9999px",
    },
    extend: {
      maxWidth: { page: "80rem", form: "24rem" },
    },
  },
};

export default config;
