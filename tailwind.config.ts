import type { Config } from "tailwindcss";

// Beadbench's own palette: a calm slate base with a teal accent and clear
// status colours. Loaded from src/app/globals.css with `@config`.
const config: Config = {
  content: ["./src/**/*.{ts,tsx}"],
  theme: {
    extend: {
      fontFamily: {
        sans: ["Inter", "system-ui", "sans-serif"],
        mono: ["Roboto Mono", "ui-monospace", "monospace"],
      },
      colors: {
        ink: { DEFAULT: "#1f2a37", soft: "#4b5a6b", faint: "#8a97a6" },
        paper: { DEFAULT: "#f7f8f6", card: "#ffffff", line: "#e2e6e3" },
        accent: { DEFAULT: "#0f766e", soft: "#ccebe7", strong: "#0b5a54" },
        good: "#2f7d32",
        watch: "#b7791f",
        bad: "#b42318",
        idle: "#6b7280",
      },
    },
  },
};

export default config;
