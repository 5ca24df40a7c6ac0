// fontkit 2 (the maintained line, split into packages a bundler can chunk) in the shape pdf-lib
// registers. pdf-lib was written against fontkit 1, whose font subsets had `encodeStream()`, a
// stream that flows by itself and that pdf-lib listens to for `data`, `end` and `error`; fontkit 2's
// subsets have `encode()`, which returns the bytes at once. Everything else pdf-lib reads of a
// font (layout, glyphs, metrics, bbox, postscriptName, characterSet) is the same in both.
import { create } from 'fontkit';
import type { PDFDocument } from 'pdf-lib';

type Fontkit = Parameters<PDFDocument['registerFontkit']>[0];
type Listener = (value?: unknown) => void;

interface EncodableSubset {
  encode(): Uint8Array;
  encodeStream?: () => unknown;
}

function withEncodeStream<T extends EncodableSubset>(subset: T): T {
  subset.encodeStream = () => {
    const listeners = new Map<string, Listener>();
    const stream = {
      on(event: string, listener: Listener) {
        listeners.set(event, listener);
        return stream;
      },
    };
    // As fontkit 1's stream did: it flows on its own once the caller's listeners are on.
    queueMicrotask(() => {
      try {
        listeners.get('data')?.(subset.encode());
        listeners.get('end')?.();
      } catch (error) {
        listeners.get('error')?.(error);
      }
    });
    return stream;
  };
  return subset;
}

export const fontkitForPdfLib = {
  create(data: Uint8Array, postscriptName?: string) {
    // fontkit 2 reads any Uint8Array (its types say Node's Buffer, a Uint8Array subclass).
    const font = create(data as Parameters<typeof create>[0], postscriptName) as unknown as {
      createSubset(): EncodableSubset;
    };
    const createSubset = font.createSubset.bind(font);
    font.createSubset = () => withEncodeStream(createSubset());
    return font;
  },
} as unknown as Fontkit;
