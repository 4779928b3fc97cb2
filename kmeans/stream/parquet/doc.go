// Package parquet reads and writes Apache Parquet files for package
// kmeans/stream: Source reads numeric columns by name, a block at a time,
// as a reopenable stream.Source; Writer writes rows of numbers and text,
// such as labels.
//
// It is the one package of the clustering library that imports a module
// beyond the standard library and gonum (github.com/parquet-go/parquet-go),
// so that kmeans/stream itself stays free of it.
//
// # Columns
//
// Top-level columns of physical type DOUBLE, FLOAT, INT32 or INT64 can be
// read, required or optional, with no logical type or an integer one;
// integers are converted to float64 (exactly up to 2⁵³). Columns of other
// types (BOOLEAN, BYTE_ARRAY, DECIMAL, dates and times, lists, groups)
// give an error wrapping stream.ErrColumn; any column can be carried as
// text with stream.Options.Keep.
//
// # Bad rows
//
// A null, NaN or ±Inf in a column read gives a *stream.RowError naming
// the file, the row (0-based over the whole file) and the column, or with
// stream.Options.Skip skips and counts the row.
//
// # Memory
//
// Source decodes one page per column at a time (pages are typically up to
// a megabyte); Writer buffers one row group (WriterOptions.RowGroupRows rows) before
// writing it.
package parquet
