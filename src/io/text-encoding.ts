// Recognising UTF-16 text by its bytes. Some Windows programs save "Unicode" text as UTF-16, which has a zero
// byte beside every ASCII character; read as UTF-8 it looks like binary data, so readers check for it first and
// say what the file is (Unicode Standard, chapter 3: UTF-16 encoding forms and the byte-order mark U+FEFF).

/** UTF-16 by byte-order mark, or by zero bytes in every other place of the first bytes (ASCII text in UTF-16). */
export function utf16Kind(bytes: Uint8Array): 'UTF-16LE' | 'UTF-16BE' | null {
  if (bytes.length >= 2 && bytes[0] === 0xff && bytes[1] === 0xfe) return 'UTF-16LE';
  if (bytes.length >= 2 && bytes[0] === 0xfe && bytes[1] === 0xff) return 'UTF-16BE';
  const n = Math.min(bytes.length & ~1, 256);
  if (n < 4) return null;
  let evenZero = 0;
  let oddZero = 0;
  for (let i = 0; i < n; i += 2) {
    if (bytes[i] === 0) evenZero++;
    if (bytes[i + 1] === 0) oddZero++;
  }
  if (oddZero === n / 2 && evenZero === 0) return 'UTF-16LE';
  if (evenZero === n / 2 && oddZero === 0) return 'UTF-16BE';
  return null;
}
