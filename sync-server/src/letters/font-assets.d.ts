// Vite turns `?inline` asset imports into base64 data URLs.
declare module '*.ttf?inline' {
  const dataUrl: string;
  export default dataUrl;
}
