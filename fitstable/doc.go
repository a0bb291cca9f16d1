// Package fitstable reads and writes binary tables in FITS files (the
// Flexible Image Transport System, FITS Standard 4.0, the format most
// astronomical catalogs ship in), one row at a time.
//
// A FITS file is a sequence of header–data units (HDUs), each a header of
// 80-byte cards padded to a multiple of 2880 bytes, then its data, padded
// the same way. A catalog lives in a BINTABLE extension: fixed-width,
// big-endian rows whose columns are described by TFORMn (type and repeat
// count), TTYPEn (name), TUNITn (unit), TNULLn (the integer stored for
// "no value"), and TSCALn/TZEROn (a linear scaling of the stored integer,
// which is also how unsigned integers are written).
//
// The Reader streams: it skips the primary HDU and any extension not asked
// for without holding them, and reads one row of the chosen table at a
// time, so a table larger than memory is no problem. Gzip-compressed files
// are recognised by their first two bytes. Scalar columns of types L
// (logical), B, I, J, K (integers, signed or unsigned by the TZERO
// convention), E, D (floats) and A (fixed-width strings) are decoded;
// other columns (vectors, bits, complex numbers, variable-length arrays)
// are described but cannot be read, with an error naming them.
//
// The Writer streams too: rows go to a temporary file beside the target,
// NAXIS2 is fixed up in the header when the table is closed, and only then
// is the file renamed into place, so a table is written whole or not at
// all.
//
// The package imports nothing from the rest of spinpop.
package fitstable
