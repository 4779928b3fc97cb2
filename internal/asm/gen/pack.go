package main

// packShiftAVX512 writes packShiftAVX512(dst, r2, x, shift *float64,
// panels, d int): for each of the panels full panels of eight rows of x
// (row-major, d columns), x − shift in the packed layout and each row's
// squared norm. Eight columns of eight rows are loaded (the last chunk
// masked), shifted, transposed in registers and stored as eight
// coordinate vectors.
//
//	SI rows of the panel   DI packed panel   R9 row stride 8d   R10 3·8d
//	R8 rows 4–7            R11 column t      R12 d              CX panels left
//	DX shift               BX r2             AX temporary
//	R14, R15 rows 0–3 and 4–7 of the next panel (prefetched)
//	Z0–Z7 rows / coordinates, Z8–Z23 transposition, Z24 shift, Z25 norms
func packShiftAVX512(a *asm) {
	a.p("")
	a.p("// func packShiftAVX512(dst, r2, x, shift *float64, panels, d int)")
	a.p("TEXT ·packShiftAVX512(SB), NOSPLIT, $0-48")
	a.i("MOVQ dst+0(FP), DI")
	a.i("MOVQ r2+8(FP), BX")
	a.i("MOVQ x+16(FP), SI")
	a.i("MOVQ shift+24(FP), DX")
	a.i("MOVQ panels+32(FP), CX")
	a.i("MOVQ d+40(FP), R12")
	a.i("LEAQ (R12*8), R9")
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
	a.i("MOVQ $8, R13")
	a.i("CMPQ AX, R13")
	a.i("CMOVQGT R13, AX")
	a.i("MOVL $0xFF, R13")
	a.i("BZHIQ AX, R13, R13")
	a.i("KMOVW R13, K1")
	a.i("VMOVUPD.Z (DX)(R11*8), K1, Z24")
	rows := []string{"(SI)", "(SI)(R9*1)", "(SI)(R9*2)", "(SI)(R10*1)", "(R8)", "(R8)(R9*1)", "(R8)(R9*2)", "(R8)(R10*1)"}
	// Prefetch the same columns of the next panel's rows.
	for _, r := range []string{"(R14)", "(R14)(R9*1)", "(R14)(R9*2)", "(R14)(R10*1)", "(R15)", "(R15)(R9*1)", "(R15)(R9*2)", "(R15)(R10*1)"} {
		a.i("PREFETCHT0 %s", r)
	}
	for q, r := range rows {
		a.i("VMOVUPD.Z %s, K1, %s", r, z(q))
		a.i("VSUBPD Z24, %s, %s", z(q), z(q))
	}
	// Stage 1: pairs of rows interleaved.
	for q := 0; q < 8; q += 2 {
		a.i("VUNPCKLPD %s, %s, %s", z(q+1), z(q), z(8+q))
		a.i("VUNPCKHPD %s, %s, %s", z(q+1), z(q), z(9+q))
	}
	// Stage 2: 128-bit lanes of row pairs (0,1)+(2,3) and (4,5)+(6,7).
	// t(lo/hi of pair p) = Z8+2p / Z9+2p.
	for half := range 2 {
		b := 8 + 4*half // pair (0,1) or (4,5): lo at b, hi at b+1; next pair at b+2, b+3
		u := 16 + 4*half
		a.i("VSHUFF64X2 $0x88, %s, %s, %s", z(b+2), z(b), z(u))     // coordinates 0, 4 (lo)
		a.i("VSHUFF64X2 $0xDD, %s, %s, %s", z(b+2), z(b), z(u+1))   // coordinates 2, 6
		a.i("VSHUFF64X2 $0x88, %s, %s, %s", z(b+3), z(b+1), z(u+2)) // 1, 5
		a.i("VSHUFF64X2 $0xDD, %s, %s, %s", z(b+3), z(b+1), z(u+3)) // 3, 7
	}
	// Stage 3: coordinate c from rows 0–3 (Z16+i) and 4–7 (Z20+i).
	for i, cs := range [][2]int{{0, 4}, {2, 6}, {1, 5}, {3, 7}} {
		a.i("VSHUFF64X2 $0x88, %s, %s, %s", z(20+i), z(16+i), z(cs[0]))
		a.i("VSHUFF64X2 $0xDD, %s, %s, %s", z(20+i), z(16+i), z(cs[1]))
	}
	for q := range 8 {
		a.i("VFMADD231PD %s, %s, Z25", z(q), z(q))
	}
	// Store the first AX coordinates.
	for q := range 8 {
		a.i("VMOVUPD %s, %d(DI)", z(q), 64*q)
		if q < 7 {
			a.i("CMPQ AX, $%d", q+2)
			a.i("JLT nextpack")
		}
	}
	a.p("nextpack:")
	a.i("SHLQ $6, AX")
	a.i("ADDQ AX, DI")
	a.i("ADDQ $8, R11")
	a.i("ADDQ $64, SI")
	a.i("ADDQ $64, R8")
	a.i("ADDQ $64, R14")
	a.i("ADDQ $64, R15")
	a.i("JMP chunkpack")
	a.p("endpack:")
	a.i("VMOVUPD Z25, (BX)")
	a.i("ADDQ $64, BX")
	// SI has advanced by 8·ceil(d/8) values; move to the next panel's first row.
	a.i("LEAQ (SI)(R10*2), SI")
	a.i("ADDQ R9, SI")
	a.i("ADDQ R9, SI")
	a.i("MOVQ R12, AX")
	a.i("ADDQ $7, AX")
	a.i("SHRQ $3, AX")
	a.i("SHLQ $6, AX")
	a.i("SUBQ AX, SI")
	a.i("DECQ CX")
	a.i("JMP panelpack")
	a.p("donepack:")
	a.i("VZEROUPPER")
	a.i("RET")
}
