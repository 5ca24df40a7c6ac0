// Lato shipped with the app through @fontsource (never from a CDN), so it works offline.
import '@fontsource/lato/400.css';
import '@fontsource/lato/700.css';
