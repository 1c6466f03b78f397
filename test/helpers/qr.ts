import jsQRModule from 'jsqr';
import { PNG } from 'pngjs';

// jsqr is a CommonJS bundle whose typings declare an ES default export; take whichever is callable.
const jsQR = ((jsQRModule as unknown as { default?: unknown }).default ?? jsQRModule) as typeof jsQRModule.default;

/** Reads a QR code from PNG bytes with jsQR, a reader independent of the library that drew it. */
export function decodeQr(png: Buffer): string {
  const image = PNG.sync.read(png);
  const found = jsQR(new Uint8ClampedArray(image.data), image.width, image.height);
  if (!found) throw new Error('no QR code found in the image');
  return found.data;
}
