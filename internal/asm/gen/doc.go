// Command gen writes the amd64 assembly of internal/asm/f64:
//
//	cd internal/asm/gen && go run . -out ../f64
//
// It lives in its own module so that the library's module does not build
// it. The generated files are committed; regenerate them after changing
// this program and run the f64 tests, which compare every kernel with the
// pure-Go reference.
package main
