package main

import "fmt"

// The float32 kernels of internal/asm/f32. They follow the float64 ones
// (avx512.go, avx2.go) with float32 lanes: a panel is 16 rows, one zmm
// (or two ymm) per coordinate, products and sums in float32, and the
// index of the best center in int32 lanes.

// avx512F32 writes best2AVX512, packShiftAVX512 and fmaLoopAVX512 of
// package f32.
func avx512F32(a *asm) {
	a.p("")
	a.p("DATA two512<>+0(SB)/4, $0x40000000")
	a.p("GLOBL two512<>(SB), RODATA|NOPTR, $4")
	best2AVX512F32(a)
	packShiftAVX512F32(a)
	addScaledAVX512F32(a)
	fmaLoopPS(a, "fmaLoopAVX512", z, "VPXORQ", 12)
}

// Registers of best2AVX512 (float32): as in the float64 kernel, with 16
// rows per panel and 4-byte elements.
//
//	CX  first row of the tile          DX  norm2
//	DI  x panel of rows 0–15           SI  x panel of rows 16–31
//	BX  centers j…j+3 (C0)             R8  centers j+4…j+7 (C4)
//	R9  center stride 4d               R10 3·4d
//	R11 byte offset in the x panel     R12 panel size 64d
//	R13 j                              R14 j1
//	Z0–Z15 accumulators   Z16, Z17 rows   Z18, Z19 broadcasts
//	Z20–Z22 best, second, index of rows 0–15, Z23–Z25 of rows 16–31
//	Z26 2.0               K1, K2 comparisons, K3, K4 row masks
func best2AVX512F32(a *asm) {
	a.p("")
	a.p("// func best2AVX512(idx *int32, best, second *float32, x *float32, m, d int, c, norm2 *float32, j0, j1 int)")
	a.p("TEXT ·best2AVX512(SB), NOSPLIT, $0-80")
	a.i("MOVQ d+40(FP), R9")
	a.i("SHLQ $2, R9")
	a.i("LEAQ (R9)(R9*2), R10")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $4, R12")
	a.i("VBROADCASTSS two512<>(SB), Z26")
	a.i("MOVQ norm2+56(FP), DX")
	a.i("MOVQ j1+72(FP), R14")
	a.i("XORQ CX, CX")
	a.p("rows512:")
	a.i("MOVQ m+32(FP), AX")
	a.i("SUBQ CX, AX")
	a.i("JLE done512")
	a.i("MOVL $0xFFFF, BX")
	a.i("CMPQ AX, $16")
	a.i("JLE one512")
	a.i("KMOVW BX, K3")
	a.i("SUBQ $16, AX")
	a.i("MOVQ $16, R8")
	a.i("CMPQ AX, $16")
	a.i("CMOVQGT R8, AX")
	a.i("BZHIQ AX, BX, BX")
	a.i("KMOVW BX, K4")
	tile512F32(a, 2)
	a.i("ADDQ $32, CX")
	a.i("JMP rows512")
	a.p("one512:")
	a.i("BZHIQ AX, BX, BX")
	a.i("KMOVW BX, K3")
	tile512F32(a, 1)
	a.i("ADDQ $16, CX")
	a.i("JMP rows512")
	a.p("done512:")
	a.i("VZEROUPPER")
	a.i("RET")
}

// tile512F32 writes the loop over all centers for R panels of rows.
func tile512F32(a *asm, R int) {
	l := func(s string) string { return fmt.Sprintf("%s512r%d", s, R) }
	masks := []string{"K3", "K4"}
	for r := range R {
		b, s, ix := state512(r)
		off := 64 * r
		a.i("MOVQ best+8(FP), AX")
		a.i("VMOVUPS.Z %d(AX)(CX*4), %s, %s", off, masks[r], b)
		a.i("MOVQ second+16(FP), AX")
		a.i("VMOVUPS.Z %d(AX)(CX*4), %s, %s", off, masks[r], s)
		a.i("MOVQ idx+0(FP), AX")
		a.i("VMOVDQU32.Z %d(AX)(CX*4), %s, %s", off, masks[r], ix)
	}
	a.i("MOVQ CX, DI")
	a.i("IMULQ R9, DI")
	a.i("ADDQ x+24(FP), DI")
	a.i("LEAQ (DI)(R12*1), SI")
	a.i("MOVQ j0+64(FP), R13")
	a.p("%s:", l("g8"))
	a.i("MOVQ R14, AX")
	a.i("SUBQ R13, AX")
	a.i("CMPQ AX, $8")
	a.i("JLT %s", l("g1"))
	a.i("MOVQ R13, BX")
	a.i("IMULQ R9, BX")
	a.i("ADDQ c+48(FP), BX")
	a.i("LEAQ (BX)(R9*4), R8")
	for q := range 8 * R {
		a.i("VPXORQ %s, %s, %s", z(q), z(q), z(q))
	}
	a.i("XORQ R11, R11")
	addr := []string{"(BX)", "(BX)(R9*1)", "(BX)(R9*2)", "(BX)(R10*1)", "(R8)", "(R8)(R9*1)", "(R8)(R9*2)", "(R8)(R10*1)"}
	a.p("%s:", l("t8"))
	a.i("VMOVUPS (DI)(R11*1), Z16")
	if R == 2 {
		a.i("VMOVUPS (SI)(R11*1), Z17")
	}
	for q := range 8 {
		bc := z(18 + q%2)
		a.i("VBROADCASTSS %s, %s", addr[q], bc)
		a.i("VFMADD231PS %s, Z16, %s", bc, z(q))
		if R == 2 {
			a.i("VFMADD231PS %s, Z17, %s", bc, z(8+q))
		}
	}
	a.i("ADDQ $4, BX")
	a.i("ADDQ $4, R8")
	a.i("ADDQ $64, R11")
	a.i("CMPQ R11, R12")
	a.i("JLT %s", l("t8"))
	for q := range 8 {
		for r := range R {
			merge512F32(a, z(8*r+q), r, q)
		}
	}
	a.i("ADDQ $8, R13")
	a.i("JMP %s", l("g8"))
	a.p("%s:", l("g1"))
	a.i("CMPQ R13, R14")
	a.i("JGE %s", l("end"))
	a.i("MOVQ R13, BX")
	a.i("IMULQ R9, BX")
	a.i("ADDQ c+48(FP), BX")
	a.i("VPXORQ Z0, Z0, Z0")
	a.i("VPXORQ Z8, Z8, Z8")
	a.i("XORQ R11, R11")
	a.p("%s:", l("t1"))
	a.i("VBROADCASTSS (BX), Z18")
	a.i("VFMADD231PS (DI)(R11*1), Z18, Z0")
	if R == 2 {
		a.i("VFMADD231PS (SI)(R11*1), Z18, Z8")
	}
	a.i("ADDQ $4, BX")
	a.i("ADDQ $64, R11")
	a.i("CMPQ R11, R12")
	a.i("JLT %s", l("t1"))
	for r := range R {
		merge512F32(a, z(8*r), r, 0)
	}
	a.i("INCQ R13")
	a.i("JMP %s", l("g1"))
	a.p("%s:", l("end"))
	for r := range R {
		b, s, ix := state512(r)
		off := 64 * r
		a.i("MOVQ best+8(FP), AX")
		a.i("VMOVUPS %s, %s, %d(AX)(CX*4)", b, masks[r], off)
		a.i("MOVQ second+16(FP), AX")
		a.i("VMOVUPS %s, %s, %d(AX)(CX*4)", s, masks[r], off)
		a.i("MOVQ idx+0(FP), AX")
		a.i("VMOVDQU32 %s, %s, %d(AX)(CX*4)", ix, masks[r], off)
	}
}

// merge512F32 turns accumulator acc (dot products with center j+q, j in
// R13) into norm2 − 2·dot and records it in the state of row panel r.
func merge512F32(a *asm, acc string, r, q int) {
	b, s, ix := state512(r)
	a.i("VFNMADD213PS.BCST %d(DX)(R13*4), Z26, %s", 4*q, acc)
	a.i("VCMPPS $0x11, %s, %s, K2", s, acc)
	a.i("VCMPPS $0x11, %s, %s, K1", b, acc)
	a.i("VMOVAPS %s, K2, %s", acc, s)
	a.i("VMOVAPS %s, K1, %s", b, s)
	a.i("VMOVAPS %s, K1, %s", acc, b)
	a.i("LEAQ %d(R13), AX", q)
	a.i("VPBROADCASTD AX, K1, %s", ix)
}

// packShiftAVX512F32 writes packShiftAVX512(dst, r2, x, shift *float32,
// panels, d int): for each of the full panels of 16 rows of x (row-major,
// d columns, so that a panel is 64d contiguous bytes), x − shift in the
// packed layout and each row's squared norm. Sixteen columns of the 16
// rows are loaded (the last chunk masked), shifted, transposed in
// registers (four stages of 16 shuffles) and stored as 16 coordinate
// vectors.
//
//	SI, R8, R14, R15 rows 0–3, 4–7, 8–11, 12–15 of the panel at column t
//	R9 row stride 4d   R10 3·4d   DI packed panel   DX shift   BX r2
//	R11 t   R12 d   CX panels left   AX, R13 temporaries
//	Z0–Z17 rows / coordinates (renamed as the stages go), Z24 shift,
//	Z25 norms, K1 column mask
func packShiftAVX512F32(a *asm) {
	a.p("")
	a.p("// func packShiftAVX512(dst, r2, x, shift *float32, panels, d int)")
	a.p("TEXT ·packShiftAVX512(SB), NOSPLIT, $0-48")
	a.i("MOVQ dst+0(FP), DI")
	a.i("MOVQ r2+8(FP), BX")
	a.i("MOVQ x+16(FP), SI")
	a.i("MOVQ shift+24(FP), DX")
	a.i("MOVQ panels+32(FP), CX")
	a.i("MOVQ d+40(FP), R12")
	a.i("LEAQ (R12*4), R9")
	a.i("LEAQ (R9)(R9*2), R10")
	a.p("panelpack:")
	a.i("TESTQ CX, CX")
	a.i("JLE donepack")
	a.i("LEAQ (SI)(R9*4), R8")
	a.i("LEAQ (R8)(R9*4), R14")
	a.i("LEAQ (R14)(R9*4), R15")
	a.i("VPXORQ Z25, Z25, Z25")
	a.i("XORQ R11, R11")
	a.p("chunkpack:")
	a.i("MOVQ R12, AX")
	a.i("SUBQ R11, AX")
	a.i("JLE endpack")
	a.i("MOVQ $16, R13")
	a.i("CMPQ AX, R13")
	a.i("CMOVQGT R13, AX")
	a.i("MOVL $0xFFFF, R13")
	a.i("BZHIQ AX, R13, R13")
	a.i("KMOVW R13, K1")
	a.i("VMOVUPS.Z (DX)(R11*4), K1, Z24")
	// cur[i] is the register of logical vector i; free the spare ones.
	var cur [16]int
	free := []int{16, 17}
	bases := []string{"SI", "R8", "R14", "R15"}
	offs := []string{"(%s)", "(%s)(R9*1)", "(%s)(R9*2)", "(%s)(R10*1)"}
	for i := range 16 {
		cur[i] = i
		a.i("VMOVUPS.Z "+offs[i%4]+", K1, %s", bases[i/4], z(i))
		a.i("VSUBPS Z24, %s, %s", z(i), z(i))
	}
	// pair computes lo(a, b) into a fresh register and hi(a, b) in place
	// of a, and frees b; it returns the registers of lo and hi.
	pair := func(lo, hi string, ra, rb int) (int, int) {
		t := free[len(free)-1]
		free = free[:len(free)-1]
		a.i(lo, z(rb), z(ra), z(t))
		a.i(hi, z(rb), z(ra), z(ra))
		free = append(free, rb)
		return t, ra
	}
	// Stage 1: rows 2i and 2i+1 interleaved by element.
	var t1 [16]int
	for i := range 8 {
		t1[2*i], t1[2*i+1] = pair("VUNPCKLPS %s, %s, %s", "VUNPCKHPS %s, %s, %s", cur[2*i], cur[2*i+1])
	}
	// Stage 2: by pairs of elements; s2[4g+c] holds, in 128-bit lane L,
	// column 4L+c of rows 4g…4g+3.
	var s2 [16]int
	for g := range 4 {
		s2[4*g], s2[4*g+1] = pair("VUNPCKLPD %s, %s, %s", "VUNPCKHPD %s, %s, %s", t1[4*g], t1[4*g+2])
		s2[4*g+2], s2[4*g+3] = pair("VUNPCKLPD %s, %s, %s", "VUNPCKHPD %s, %s, %s", t1[4*g+1], t1[4*g+3])
	}
	// Stage 3: lanes of row groups (0–3, 4–7) and (8–11, 12–15):
	// u[h][c] = columns c, 8+c of the eight rows, v[h][c] = 4+c, 12+c.
	var u, v [2][4]int
	for h := range 2 {
		for c := range 4 {
			u[h][c], v[h][c] = pair("VSHUFF32X4 $0x88, %s, %s, %s", "VSHUFF32X4 $0xDD, %s, %s, %s", s2[8*h+c], s2[8*h+4+c])
		}
	}
	// Stage 4: the two halves of the rows; col[j] is column j of all 16.
	var col [16]int
	for c := range 4 {
		col[c], col[8+c] = pair("VSHUFF32X4 $0x88, %s, %s, %s", "VSHUFF32X4 $0xDD, %s, %s, %s", u[0][c], u[1][c])
		col[4+c], col[12+c] = pair("VSHUFF32X4 $0x88, %s, %s, %s", "VSHUFF32X4 $0xDD, %s, %s, %s", v[0][c], v[1][c])
	}
	for j := range 16 {
		a.i("VFMADD231PS %s, %s, Z25", z(col[j]), z(col[j]))
	}
	for j := range 16 {
		a.i("VMOVUPS %s, %d(DI)", z(col[j]), 64*j)
		if j < 15 {
			a.i("CMPQ AX, $%d", j+2)
			a.i("JLT nextpack")
		}
	}
	a.p("nextpack:")
	a.i("SHLQ $6, AX")
	a.i("ADDQ AX, DI")
	a.i("ADDQ $16, R11")
	for _, b := range bases {
		a.i("ADDQ $64, %s", b)
	}
	a.i("JMP chunkpack")
	a.p("endpack:")
	a.i("VMOVUPS Z25, (BX)")
	a.i("ADDQ $64, BX")
	// SI has advanced by 64·ceil(d/16) bytes; the next panel starts 16
	// rows (16·4d bytes) after this one's first row.
	a.i("MOVQ R12, AX")
	a.i("ADDQ $15, AX")
	a.i("SHRQ $4, AX")
	a.i("SHLQ $6, AX")
	a.i("SUBQ AX, SI")
	a.i("SHLQ $2, R9")
	a.i("LEAQ (SI)(R9*4), SI")
	a.i("SHRQ $2, R9")
	a.i("DECQ CX")
	a.i("JMP panelpack")
	a.p("donepack:")
	a.i("VZEROUPPER")
	a.i("RET")
}

// fmaLoopPS is fmaLoop with float32 lanes.
func fmaLoopPS(a *asm, name string, reg func(int) string, zero string, chains int) {
	a.p("")
	a.p("// func %s(n int)", name)
	a.p("TEXT ·%s(SB), NOSPLIT, $0-8", name)
	a.i("MOVQ n+0(FP), CX")
	for q := range chains + 2 {
		a.i("%s %s, %s, %s", zero, reg(q), reg(q), reg(q))
	}
	a.p("%sloop:", name)
	a.i("TESTQ CX, CX")
	a.i("JLE %sdone", name)
	for q := range chains {
		a.i("VFMADD231PS %s, %s, %s", reg(chains), reg(chains+1), reg(q))
	}
	a.i("DECQ CX")
	a.i("JMP %sloop", name)
	a.p("%sdone:", name)
	a.i("VZEROUPPER")
	a.i("RET")
}

// avx2F32 writes best2AVX2 and fmaLoopAVX2 of package f32.
func avx2F32(a *asm) {
	a.p("")
	a.p("DATA two256<>+0(SB)/4, $0x40000000")
	a.p("GLOBL two256<>(SB), RODATA|NOPTR, $4")
	for l := range 32 {
		v := "$-1"
		if l >= 16 {
			v = "$0"
		}
		a.p("DATA mask256<>+%d(SB)/4, %s", 4*l, v)
	}
	a.p("GLOBL mask256<>(SB), RODATA|NOPTR, $128")
	best2AVX2F32(a)
	fmaLoopPS(a, "fmaLoopAVX2", y, "VPXOR", 12)
}

// Stack scratch of best2AVX2 (float32): best, second, index of the 16
// rows of the tile at 0, 64 and 128(SP); the two half-panel row masks at
// 192, 224(SP).
//
// Registers: as in the float64 kernel, with 16 rows per panel (two ymm of
// eight) and 4-byte elements; R9 is the center stride 4d.
func best2AVX2F32(a *asm) {
	a.p("")
	a.p("// func best2AVX2(idx *int32, best, second *float32, x *float32, m, d int, c, norm2 *float32, j0, j1 int)")
	a.p("TEXT ·best2AVX2(SB), NOSPLIT, $256-80")
	a.i("MOVQ d+40(FP), R9")
	a.i("SHLQ $2, R9")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $4, R12")
	a.i("VBROADCASTSS two256<>(SB), Y15")
	a.i("MOVQ norm2+56(FP), DX")
	a.i("MOVQ j1+72(FP), R14")
	a.i("XORQ CX, CX")
	a.p("rows256:")
	a.i("MOVQ m+32(FP), AX")
	a.i("SUBQ CX, AX")
	a.i("JLE done256")
	a.i("MOVQ $16, BX")
	a.i("CMPQ AX, BX")
	a.i("CMOVQGT BX, AX")
	a.i("SUBQ AX, BX")
	a.i("LEAQ mask256<>(SB), AX")
	a.i("VMOVDQU (AX)(BX*4), Y11")
	a.i("VMOVDQU 32(AX)(BX*4), Y12")
	a.i("VMOVDQU Y11, 192(SP)")
	a.i("VMOVDQU Y12, 224(SP)")
	for _, f := range []struct{ arg, off string }{{"best+8(FP)", "0"}, {"second+16(FP)", "64"}, {"idx+0(FP)", "128"}} {
		a.i("MOVQ %s, AX", f.arg)
		a.i("VMASKMOVPS (AX)(CX*4), Y11, Y13")
		a.i("VMASKMOVPS 32(AX)(CX*4), Y12, Y14")
		a.i("VMOVUPS Y13, %s(SP)", f.off)
		a.i("VMOVUPS Y14, %s+32(SP)", f.off)
	}
	a.i("MOVQ CX, DI")
	a.i("IMULQ R9, DI")
	a.i("ADDQ x+24(FP), DI")
	a.i("MOVQ j0+64(FP), R13")
	for _, G := range []int{4, 1} {
		l := func(s string) string { return fmt.Sprintf("%s256g%d", s, G) }
		a.p("%s:", l("group"))
		a.i("MOVQ R14, AX")
		a.i("SUBQ R13, AX")
		a.i("CMPQ AX, $%d", G)
		a.i("JLT %s", l("next"))
		a.i("MOVQ R13, BX")
		a.i("IMULQ R9, BX")
		a.i("ADDQ c+48(FP), BX")
		a.i("LEAQ (BX)(R9*2), R8")
		for q := range G {
			a.i("VPXOR %s, %s, %s", y(q), y(q), y(q))
			a.i("VPXOR %s, %s, %s", y(4+q), y(4+q), y(4+q))
		}
		a.i("XORQ R11, R11")
		addr := []string{"(BX)", "(BX)(R9*1)", "(R8)", "(R8)(R9*1)"}
		a.p("%s:", l("t"))
		a.i("VMOVUPS (DI)(R11*1), Y8")
		a.i("VMOVUPS 32(DI)(R11*1), Y9")
		for q := range G {
			a.i("VBROADCASTSS %s, Y10", addr[q])
			a.i("VFMADD231PS Y10, Y8, %s", y(q))
			a.i("VFMADD231PS Y10, Y9, %s", y(4+q))
		}
		a.i("ADDQ $4, BX")
		a.i("ADDQ $4, R8")
		a.i("ADDQ $64, R11")
		a.i("CMPQ R11, R12")
		a.i("JLT %s", l("t"))
		for r := range 2 {
			off := 32 * r
			a.i("VMOVUPS %d(SP), Y8", off)
			a.i("VMOVUPS %d(SP), Y9", 64+off)
			a.i("VMOVUPS %d(SP), Y10", 128+off)
			for q := range G {
				acc := y(4*r + q)
				a.i("VBROADCASTSS %d(DX)(R13*4), Y11", 4*q)
				a.i("VFNMADD213PS Y11, Y15, %s", acc)
				a.i("VCMPPS $0x11, Y9, %s, Y13", acc)
				a.i("VCMPPS $0x11, Y8, %s, Y14", acc)
				a.i("LEAQ %d(R13), AX", q)
				a.i("MOVQ AX, X12")
				a.i("VPBROADCASTD X12, Y12")
				a.i("VBLENDVPS Y13, %s, Y9, Y9", acc)
				a.i("VBLENDVPS Y14, Y8, Y9, Y9")
				a.i("VBLENDVPS Y14, %s, Y8, Y8", acc)
				a.i("VBLENDVPS Y14, Y12, Y10, Y10")
			}
			a.i("VMOVUPS Y8, %d(SP)", off)
			a.i("VMOVUPS Y9, %d(SP)", 64+off)
			a.i("VMOVUPS Y10, %d(SP)", 128+off)
		}
		a.i("ADDQ $%d, R13", G)
		a.i("JMP %s", l("group"))
		a.p("%s:", l("next"))
	}
	a.i("VMOVDQU 192(SP), Y11")
	a.i("VMOVDQU 224(SP), Y12")
	for _, f := range []struct{ arg, off string }{{"best+8(FP)", "0"}, {"second+16(FP)", "64"}, {"idx+0(FP)", "128"}} {
		a.i("MOVQ %s, AX", f.arg)
		a.i("VMOVUPS %s(SP), Y13", f.off)
		a.i("VMOVUPS %s+32(SP), Y14", f.off)
		a.i("VMASKMOVPS Y13, Y11, (AX)(CX*4)")
		a.i("VMASKMOVPS Y14, Y12, 32(AX)(CX*4)")
	}
	a.i("ADDQ $16, CX")
	a.i("JMP rows256")
	a.p("done256:")
	a.i("VZEROUPPER")
	a.i("RET")
}

// addScaledAVX512F32 writes addScaledAVX512(dst *float64, alpha float64,
// x *float32, n int): dst[i] += alpha·x[i] for i < n, eight at a time
// (the last chunk masked), x widened exactly, the product and the sum
// each rounded (a multiply and an add, no fused multiply-add).
//
//	DI dst  SI x  CX n  AX i  R8 count  R9 mask bits  Z1 alpha
func addScaledAVX512F32(a *asm) {
	a.p("")
	a.p("// func addScaledAVX512(dst *float64, alpha float64, x *float32, n int)")
	a.p("TEXT ·addScaledAVX512(SB), NOSPLIT, $0-32")
	a.i("MOVQ dst+0(FP), DI")
	a.i("VBROADCASTSD alpha+8(FP), Z1")
	a.i("MOVQ x+16(FP), SI")
	a.i("MOVQ n+24(FP), CX")
	a.i("XORQ AX, AX")
	a.p("loopaxpy:")
	a.i("MOVQ CX, R8")
	a.i("SUBQ AX, R8")
	a.i("CMPQ R8, $8")
	a.i("JLT tailaxpy")
	a.i("VCVTPS2PD (SI)(AX*4), Z0")
	a.i("VMULPD Z1, Z0, Z0")
	a.i("VADDPD (DI)(AX*8), Z0, Z0")
	a.i("VMOVUPD Z0, (DI)(AX*8)")
	a.i("ADDQ $8, AX")
	a.i("JMP loopaxpy")
	a.p("tailaxpy:")
	a.i("TESTQ R8, R8")
	a.i("JLE doneaxpy")
	a.i("MOVL $0xFF, R9")
	a.i("BZHIQ R8, R9, R9")
	a.i("KMOVW R9, K1")
	a.i("VCVTPS2PD.Z (SI)(AX*4), K1, Z0")
	a.i("VMULPD Z1, Z0, Z0")
	a.i("VADDPD.Z (DI)(AX*8), Z0, K1, Z0")
	a.i("VMOVUPD Z0, K1, (DI)(AX*8)")
	a.p("doneaxpy:")
	a.i("VZEROUPPER")
	a.i("RET")
}
