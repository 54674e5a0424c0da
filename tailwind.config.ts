import type { Config } from "tailwindcss";

/**
 * Platen's look: a warm paper ground, ink-dark text, one accent (a deep pine) and a brick tone
 * reserved for failures. Figures are set in JetBrains Mono, text in Inter; both ship with the app.
 */
export default {
  content: ["./index.html", "./src/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        paper: {
          DEFAULT: "#f5f1e8",
          50: "#fbf9f4",
          100: "#f5f1e8",
          200: "#ebe5d8",
          300: "#ddd5c4",
          400: "#c4b9a3",
        },
        ink: {
          DEFAULT: "#2b2823",
          soft: "#55504a",
          muted: "#68615a",
          faint: "#888074",
        },
        accent: {
          DEFAULT: "#2f6b5e",
          strong: "#234f45",
          soft: "#dcebe5",
          faint: "#eef5f1",
        },
        brick: {
          DEFAULT: "#a3452f",
          soft: "#f5e1da",
        },
        ochre: {
          DEFAULT: "#805d11",
          soft: "#f3e8cc",
        },
      },
      fontFamily: {
        sans: ["Inter", "ui-sans-serif", "system-ui", "sans-serif"],
        mono: ["JetBrains Mono", "ui-monospace", "monospace"],
      },
      boxShadow: {
        sheet: "0 1px 0 rgba(43, 40, 35, 0.04), 0 1px 3px rgba(43, 40, 35, 0.06)",
      },
      // Behind a picture with transparent parts: a quiet two-tone check, so what is transparent
      // reads as such and not as white paper.
      backgroundImage: {
        checks: "conic-gradient(#e4e0d8 25%, #ffffff 0 50%, #e4e0d8 0 75%, #ffffff 0)",
      },
    },
  },
} satisfies Config;
