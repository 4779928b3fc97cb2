// Command gen writes the amd64 assembly of internal/asm/f64 and
// internal/asm/f32 (the package is the base name of -out):
//
//	cd internal/asm/gen && go run . -out ../f64 && go run . -out ../f32
//
// It lives in its own module so that the library's module does not build
// it. The generated files are committed; regenerate them after changing
// this program and run the f64 and f32 tests, which compare every kernel with the
// pure-Go reference.
package main
