// Package table reads CSV tables of people counts keyed by area and joins
// them onto the features of a geo.Layer.
//
// Reading (Read): the first line is a header naming the columns (required;
// a UTF-8 byte order mark before it is dropped; names must be non-empty and
// distinct). Options.SkipRows description rows under the header are
// skipped. Fields follow RFC 4180 quoting as implemented by encoding/csv,
// strictly (LazyQuotes off), and every row must have as many fields as the
// header. Keys stay text: leading zeros are kept. Each key is normalised by
// Options.Normalize (Trim, then StripPrefix, then KeepLast, then PadZeros);
// two rows with
// the same normalised key, or a row with an empty one, are an error naming
// both lines.
//
// The one normalisation is applied to both sides of a join: the table's
// keys when it is read, and the features' keys in Join. A caller that needs
// the form of a key (for a message or a lookup) calls Options.Normalize.
//
// Fields are separated by Options.Delimiter: a comma by default, or another
// character such as ';' or a tab.
//
// Numbers (Number, Column): a cell is a count when it is a non-negative
// number in the syntax of geo.ParseDecimal ("12", "0.5", "1.5e3"), the one
// rule for counts in every format, white space around it ignored.
// Rejected with an error naming file, line and column: negative numbers,
// NaN and infinities, values that overflow a float64 ("1e400"), and commas
// inside numbers: in a CSV file "1,234" may be a thousands separator or a
// decimal comma, so it is not guessed at. Placeholders for "no value" (see
// IsPlaceholder: "", "-", "(X)", "N", "NA", "null", "*", "X", ...) are an
// error too unless Options.NullAsZero is set; then they read as 0 and the
// join report counts them per column. Column and Join report every bad cell
// at once (CellErrors), not only the first.
//
// Joining (Join): each feature's Props[geoKeyField] is turned into text
// (integers and whole floats without decimals), normalised, and looked up.
// The requested columns are written into Props as float64 (nil for
// unmatched features), so code downstream reads counts from Props as for
// any reader. The Report lists the keys unmatched on each side and the
// people in table rows that reach no feature, so no one is lost silently,
// and hints naming the map-file key (trim, pad_zeros) under which many of
// the unmatched keys would match.
//
// Coordinate space: none; this package touches attributes only.
//
// Errors about the file are *Error values ("table: FILE: line N: column
// "C": message", line numbers 1-based in the file). Errors about a feature
// wrap a *geo.Error with the prefix "table: ".
package table
