// Zod's locale index as the app bundles it: English alone (see zodEnglishOnly in vite.config.ts).
export { default as en } from 'zod/v4/locales/en.js';
