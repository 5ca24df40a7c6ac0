// The PDF text reader for the server's letter and mail tests (shared with the tablet's tests).
export { pdfText, type PdfText } from '@fuselight/shared/pdf-text-testing';
