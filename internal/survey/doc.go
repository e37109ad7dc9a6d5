// Package survey measures a table from its values: exact rows, rows per partition (folder
// keys or a column's values, folded to time periods), and per column the distinct count
// (exact below ExactLimit, a HyperLogLog estimate above), the average string length and
// the row order. It also writes the manifest fragment, builds the portable SQL query that
// measures the same figures on the engine that holds a table, and reads that query's
// result. It reads no files: the readers in internal/datafile feed it values.
package survey
