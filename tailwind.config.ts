import type { Config } from "tailwindcss";

/**
 * Blocklight's own control-room theme: a calm blue-slate dark background for long running
 * days in a dim clubroom, high-contrast text that reads across the room, and aspect colours
 * as the trade uses them (danger red, caution amber, clear green; dark = unknown, grey).
 * Loaded from src/styles.css through Tailwind v4's `@config`.
 */
export default {
  content: ["./index.html", "./src/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        panel: {
          950: "#0b1016",
          900: "#111821",
          850: "#16202b",
          800: "#1c2835",
          700: "#283746",
          600: "#3a4b5c",
        },
        ink: {
          DEFAULT: "#e4ebf2",
          soft: "#b5c2cf",
          faint: "#7f8fa0",
        },
        brass: {
          DEFAULT: "#d9b35f",
          soft: "#a8884a",
        },
        aspect: {
          danger: "#ef3b34",
          caution: "#f5b82e",
          clear: "#2fcf6a",
          dark: "#55606b",
        },
        notice: {
          error: "#ff8a80",
          ok: "#8be0a4",
        },
      },
      fontFamily: {
        mono: ['"JetBrains Mono"', "ui-monospace", "monospace"],
        sans: ['"JetBrains Mono"', "ui-monospace", "monospace"],
      },
      fontSize: {
        // One step up from Tailwind's defaults: read at arm's length on a clubroom screen.
        base: ["1.0625rem", { lineHeight: "1.6rem" }],
      },
      boxShadow: {
        lamp: "0 0 10px 2px currentColor",
      },
    },
  },
} satisfies Config;
