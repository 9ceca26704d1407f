//go:build amd64 && !purego

#include "textflag.h"

// Lane masks for a tail of r = 1…3 elements: row r (at 32·r bytes) has its
// first r quadwords all ones. Row 0 is unused.
DATA masks<>+0(SB)/8, $0
DATA masks<>+8(SB)/8, $0
DATA masks<>+16(SB)/8, $0
DATA masks<>+24(SB)/8, $0
DATA masks<>+32(SB)/8, $0xffffffffffffffff
DATA masks<>+40(SB)/8, $0
DATA masks<>+48(SB)/8, $0
DATA masks<>+56(SB)/8, $0
DATA masks<>+64(SB)/8, $0xffffffffffffffff
DATA masks<>+72(SB)/8, $0xffffffffffffffff
DATA masks<>+80(SB)/8, $0
DATA masks<>+88(SB)/8, $0
DATA masks<>+96(SB)/8, $0xffffffffffffffff
DATA masks<>+104(SB)/8, $0xffffffffffffffff
DATA masks<>+112(SB)/8, $0xffffffffffffffff
DATA masks<>+120(SB)/8, $0
GLOBL masks<>(SB), RODATA|NOPTR, $128

// REDUCE4 sums each of four accumulators over its lanes as
// (l0+l1)+(l2+l3) and leaves the four sums, in order, in dst.
#define REDUCE4(a0, a1, a2, a3, t0, t1, dst) \
	VHADDPD a1, a0, t0 \
	VHADDPD a3, a2, t1 \
	VPERM2F128 $0x20, t1, t0, dst \
	VPERM2F128 $0x31, t1, t0, t1 \
	VADDPD t1, dst, dst

// REDUCE1 sums the lanes of the accumulator y (whose low half is x) as
// (l0+l1)+(l2+l3) into the low element of x; tx is scratch.
#define REDUCE1(y, x, tx) \
	VHADDPD y, y, y \
	VEXTRACTF128 $1, y, tx \
	VADDSD tx, x, x

// func dotProductsAVX2(a *float64, na int, b *float64, nb int, k int, c *float64, ldc int)
//
// Registers: SI row i of a, DI row i of c, DX row j of b, R11 &c[i][j],
// R9 rows left, R10 columns left, R8 = 8k, R12 = 24k, R13 = 8·ldc,
// AX/BX the moving a/b pointers of a tile, CX its counter.
// Each element of c is accumulated in four lanes (t mod 4) over the
// multiples of four, then once more with masked loads of the last k mod 4
// elements, and reduced by REDUCE4 or REDUCE1 in the same order whatever
// the tile.
TEXT ·dotProductsAVX2(SB), NOSPLIT, $8-56
	MOVQ a+0(FP), SI
	MOVQ na+8(FP), R9
	MOVQ k+32(FP), R8
	SHLQ $3, R8
	LEAQ (R8)(R8*2), R12
	MOVQ c+40(FP), DI
	MOVQ ldc+48(FP), R13
	SHLQ $3, R13
	MOVQ k+32(FP), CX
	ANDQ $3, CX
	SHLQ $5, CX
	LEAQ masks<>(SB), AX
	ADDQ CX, AX
	MOVQ AX, maskp-8(SP)

rows3:
	CMPQ R9, $3
	JLT  rows1
	MOVQ b+16(FP), DX
	MOVQ DI, R11
	MOVQ nb+24(FP), R10

cols4:
	CMPQ R10, $4
	JLT  cols1
	MOVQ SI, AX
	MOVQ DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD Y5, Y5, Y5
	VXORPD Y6, Y6, Y6
	VXORPD Y7, Y7, Y7
	VXORPD Y8, Y8, Y8
	VXORPD Y9, Y9, Y9
	VXORPD Y10, Y10, Y10
	VXORPD Y11, Y11, Y11
	MOVQ R8, CX
	SHRQ $5, CX
	JZ   t34tail

t34loop:
	VMOVUPD     (AX), Y12
	VMOVUPD     (AX)(R8*1), Y13
	VMOVUPD     (AX)(R8*2), Y14
	VMOVUPD     (BX), Y15
	VFMADD231PD Y15, Y12, Y0
	VFMADD231PD Y15, Y13, Y4
	VFMADD231PD Y15, Y14, Y8
	VMOVUPD     (BX)(R8*1), Y15
	VFMADD231PD Y15, Y12, Y1
	VFMADD231PD Y15, Y13, Y5
	VFMADD231PD Y15, Y14, Y9
	VMOVUPD     (BX)(R8*2), Y15
	VFMADD231PD Y15, Y12, Y2
	VFMADD231PD Y15, Y13, Y6
	VFMADD231PD Y15, Y14, Y10
	VMOVUPD     (BX)(R12*1), Y15
	VFMADD231PD Y15, Y12, Y3
	VFMADD231PD Y15, Y13, Y7
	VFMADD231PD Y15, Y14, Y11
	ADDQ        $32, AX
	ADDQ        $32, BX
	DECQ        CX
	JNZ         t34loop

t34tail:
	TESTQ       $24, R8
	JZ          t34reduce
	MOVQ        maskp-8(SP), CX
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (AX), Y15, Y12
	VMASKMOVPD  (AX)(R8*1), Y15, Y13
	VMASKMOVPD  (AX)(R8*2), Y15, Y14
	VMASKMOVPD  (BX), Y15, Y15
	VFMADD231PD Y15, Y12, Y0
	VFMADD231PD Y15, Y13, Y4
	VFMADD231PD Y15, Y14, Y8
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (BX)(R8*1), Y15, Y15
	VFMADD231PD Y15, Y12, Y1
	VFMADD231PD Y15, Y13, Y5
	VFMADD231PD Y15, Y14, Y9
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (BX)(R8*2), Y15, Y15
	VFMADD231PD Y15, Y12, Y2
	VFMADD231PD Y15, Y13, Y6
	VFMADD231PD Y15, Y14, Y10
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (BX)(R12*1), Y15, Y15
	VFMADD231PD Y15, Y12, Y3
	VFMADD231PD Y15, Y13, Y7
	VFMADD231PD Y15, Y14, Y11

t34reduce:
	REDUCE4(Y0, Y1, Y2, Y3, Y12, Y13, Y14)
	VMOVUPD Y14, (R11)
	REDUCE4(Y4, Y5, Y6, Y7, Y12, Y13, Y14)
	VMOVUPD Y14, (R11)(R13*1)
	REDUCE4(Y8, Y9, Y10, Y11, Y12, Y13, Y14)
	VMOVUPD Y14, (R11)(R13*2)
	LEAQ    (DX)(R8*4), DX
	ADDQ    $32, R11
	SUBQ    $4, R10
	JMP     cols4

cols1:
	TESTQ  R10, R10
	JZ     rows3next
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y4, Y4, Y4
	VXORPD Y8, Y8, Y8
	MOVQ   R8, CX
	SHRQ   $5, CX
	JZ     t31tail

t31loop:
	VMOVUPD     (BX), Y15
	VFMADD231PD (AX), Y15, Y0
	VFMADD231PD (AX)(R8*1), Y15, Y4
	VFMADD231PD (AX)(R8*2), Y15, Y8
	ADDQ        $32, AX
	ADDQ        $32, BX
	DECQ        CX
	JNZ         t31loop

t31tail:
	TESTQ       $24, R8
	JZ          t31reduce
	MOVQ        maskp-8(SP), CX
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (AX), Y15, Y12
	VMASKMOVPD  (AX)(R8*1), Y15, Y13
	VMASKMOVPD  (AX)(R8*2), Y15, Y14
	VMASKMOVPD  (BX), Y15, Y15
	VFMADD231PD Y15, Y12, Y0
	VFMADD231PD Y15, Y13, Y4
	VFMADD231PD Y15, Y14, Y8

t31reduce:
	REDUCE1(Y0, X0, X12)
	VMOVSD X0, (R11)
	REDUCE1(Y4, X4, X12)
	VMOVSD X4, (R11)(R13*1)
	REDUCE1(Y8, X8, X12)
	VMOVSD X8, (R11)(R13*2)
	ADDQ   R8, DX
	ADDQ   $8, R11
	DECQ   R10
	JMP    cols1

rows3next:
	ADDQ R12, SI
	LEAQ (DI)(R13*2), DI
	ADDQ R13, DI
	SUBQ $3, R9
	JMP  rows3

rows1:
	TESTQ R9, R9
	JZ    done
	MOVQ  b+16(FP), DX
	MOVQ  DI, R11
	MOVQ  nb+24(FP), R10

r1cols4:
	CMPQ   R10, $4
	JLT    r1cols1
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	MOVQ   R8, CX
	SHRQ   $5, CX
	JZ     t14tail

t14loop:
	VMOVUPD     (AX), Y12
	VFMADD231PD (BX), Y12, Y0
	VFMADD231PD (BX)(R8*1), Y12, Y1
	VFMADD231PD (BX)(R8*2), Y12, Y2
	VFMADD231PD (BX)(R12*1), Y12, Y3
	ADDQ        $32, AX
	ADDQ        $32, BX
	DECQ        CX
	JNZ         t14loop

t14tail:
	TESTQ       $24, R8
	JZ          t14reduce
	MOVQ        maskp-8(SP), CX
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (AX), Y15, Y12
	VMASKMOVPD  (BX), Y15, Y13
	VFMADD231PD Y13, Y12, Y0
	VMASKMOVPD  (BX)(R8*1), Y15, Y13
	VFMADD231PD Y13, Y12, Y1
	VMASKMOVPD  (BX)(R8*2), Y15, Y13
	VFMADD231PD Y13, Y12, Y2
	VMASKMOVPD  (BX)(R12*1), Y15, Y13
	VFMADD231PD Y13, Y12, Y3

t14reduce:
	REDUCE4(Y0, Y1, Y2, Y3, Y12, Y13, Y14)
	VMOVUPD Y14, (R11)
	LEAQ    (DX)(R8*4), DX
	ADDQ    $32, R11
	SUBQ    $4, R10
	JMP     r1cols4

r1cols1:
	TESTQ  R10, R10
	JZ     rows1next
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	MOVQ   R8, CX
	SHRQ   $5, CX
	JZ     t11tail

t11loop:
	VMOVUPD     (AX), Y12
	VFMADD231PD (BX), Y12, Y0
	ADDQ        $32, AX
	ADDQ        $32, BX
	DECQ        CX
	JNZ         t11loop

t11tail:
	TESTQ       $24, R8
	JZ          t11reduce
	MOVQ        maskp-8(SP), CX
	VMOVDQU     (CX), Y15
	VMASKMOVPD  (AX), Y15, Y12
	VMASKMOVPD  (BX), Y15, Y13
	VFMADD231PD Y13, Y12, Y0

t11reduce:
	REDUCE1(Y0, X0, X12)
	VMOVSD X0, (R11)
	ADDQ   R8, DX
	ADDQ   $8, R11
	DECQ   R10
	JMP    r1cols1

rows1next:
	ADDQ R8, SI
	ADDQ R13, DI
	DECQ R9
	JMP  rows1

done:
	VZEROUPPER
	RET

// func columnDotsAVX2(x, y *float64, m, np int, out *float64)
//
// out[p] = Σ_a x[a·np+p] y[a·np+p], the rows added in order with fused
// multiply–adds, 16 points at a time, then 4, then a masked tail.
TEXT ·columnDotsAVX2(SB), NOSPLIT, $0-40
	MOVQ x+0(FP), SI
	MOVQ y+8(FP), DI
	MOVQ m+16(FP), R8
	MOVQ np+24(FP), R12
	MOVQ out+32(FP), R10
	MOVQ R12, R11
	SHLQ $3, R11

cd16:
	CMPQ   R12, $16
	JLT    cd4
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	MOVQ   SI, AX
	MOVQ   DI, BX
	MOVQ   R8, CX

cd16loop:
	VMOVUPD     (AX), Y4
	VMOVUPD     32(AX), Y5
	VMOVUPD     64(AX), Y6
	VMOVUPD     96(AX), Y7
	VFMADD231PD (BX), Y4, Y0
	VFMADD231PD 32(BX), Y5, Y1
	VFMADD231PD 64(BX), Y6, Y2
	VFMADD231PD 96(BX), Y7, Y3
	ADDQ        R11, AX
	ADDQ        R11, BX
	DECQ        CX
	JNZ         cd16loop
	VMOVUPD     Y0, (R10)
	VMOVUPD     Y1, 32(R10)
	VMOVUPD     Y2, 64(R10)
	VMOVUPD     Y3, 96(R10)
	ADDQ        $128, SI
	ADDQ        $128, DI
	ADDQ        $128, R10
	SUBQ        $16, R12
	JMP         cd16

cd4:
	CMPQ   R12, $4
	JLT    cdtail
	VXORPD Y0, Y0, Y0
	MOVQ   SI, AX
	MOVQ   DI, BX
	MOVQ   R8, CX

cd4loop:
	VMOVUPD     (AX), Y4
	VFMADD231PD (BX), Y4, Y0
	ADDQ        R11, AX
	ADDQ        R11, BX
	DECQ        CX
	JNZ         cd4loop
	VMOVUPD     Y0, (R10)
	ADDQ        $32, SI
	ADDQ        $32, DI
	ADDQ        $32, R10
	SUBQ        $4, R12
	JMP         cd4

cdtail:
	TESTQ  R12, R12
	JZ     cddone
	SHLQ   $5, R12
	LEAQ   masks<>(SB), AX
	VMOVDQU (AX)(R12*1), Y15
	VXORPD Y0, Y0, Y0
	MOVQ   SI, AX
	MOVQ   DI, BX
	MOVQ   R8, CX

cdtailloop:
	VMASKMOVPD  (AX), Y15, Y4
	VMASKMOVPD  (BX), Y15, Y5
	VFMADD231PD Y5, Y4, Y0
	ADDQ        R11, AX
	ADDQ        R11, BX
	DECQ        CX
	JNZ         cdtailloop
	VMASKMOVPD  Y0, Y15, (R10)

cddone:
	VZEROUPPER
	RET

// func matMulAVX2(a *float64, m int, b *float64, k int, n int, c *float64)
//
// c (m×n) = a (m×k) · b (k×n), row-major. The columns are taken in blocks
// of 12, then 4, then the last n mod 4 with masked loads and stores; for
// each block the rows of a go by 4, then one by one, so that the block of b
// (k×12) stays in the first-level cache while a is read again.
// Registers: DX column block of b, DI of c, R10 columns left, SI row i of
// a, R11 &c[i][j], R9 rows left, R8 = 8k, R12 = 24k, R13 = 8n, Y14 the
// column mask, AX/BX the moving a/b pointers of a tile, CX its counter.
// Each element is the sum over t in order with fused multiply–adds,
// whatever its tile.
TEXT ·matMulAVX2(SB), NOSPLIT, $0-48
	MOVQ k+24(FP), R8
	SHLQ $3, R8
	LEAQ (R8)(R8*2), R12
	MOVQ n+32(FP), R13
	SHLQ $3, R13
	MOVQ b+16(FP), DX
	MOVQ c+40(FP), DI
	MOVQ n+32(FP), R10

mcols12:
	CMPQ R10, $12
	JLT  mcols4
	MOVQ a+0(FP), SI
	MOVQ DI, R11
	MOVQ m+8(FP), R9

m12rows4:
	CMPQ R9, $4
	JLT  m12rows1
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y4, Y4, Y4
	VXORPD Y5, Y5, Y5
	VXORPD Y6, Y6, Y6
	VXORPD Y7, Y7, Y7
	VXORPD Y8, Y8, Y8
	VXORPD Y9, Y9, Y9
	VXORPD Y10, Y10, Y10
	VXORPD Y11, Y11, Y11
	MOVQ   k+24(FP), CX

m412loop:
	VMOVUPD      (BX), Y12
	VMOVUPD      32(BX), Y13
	VMOVUPD      64(BX), Y14
	VBROADCASTSD (AX), Y15
	VFMADD231PD  Y12, Y15, Y0
	VFMADD231PD  Y13, Y15, Y1
	VFMADD231PD  Y14, Y15, Y2
	VBROADCASTSD (AX)(R8*1), Y15
	VFMADD231PD  Y12, Y15, Y3
	VFMADD231PD  Y13, Y15, Y4
	VFMADD231PD  Y14, Y15, Y5
	VBROADCASTSD (AX)(R8*2), Y15
	VFMADD231PD  Y12, Y15, Y6
	VFMADD231PD  Y13, Y15, Y7
	VFMADD231PD  Y14, Y15, Y8
	VBROADCASTSD (AX)(R12*1), Y15
	VFMADD231PD  Y12, Y15, Y9
	VFMADD231PD  Y13, Y15, Y10
	VFMADD231PD  Y14, Y15, Y11
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m412loop
	VMOVUPD      Y0, (R11)
	VMOVUPD      Y1, 32(R11)
	VMOVUPD      Y2, 64(R11)
	VMOVUPD      Y3, (R11)(R13*1)
	VMOVUPD      Y4, 32(R11)(R13*1)
	VMOVUPD      Y5, 64(R11)(R13*1)
	VMOVUPD      Y6, (R11)(R13*2)
	VMOVUPD      Y7, 32(R11)(R13*2)
	VMOVUPD      Y8, 64(R11)(R13*2)
	LEAQ         (R11)(R13*2), BX
	ADDQ         R13, BX
	VMOVUPD      Y9, (BX)
	VMOVUPD      Y10, 32(BX)
	VMOVUPD      Y11, 64(BX)
	LEAQ (SI)(R8*4), SI
	LEAQ (R11)(R13*4), R11
	SUBQ $4, R9
	JMP  m12rows4

m12rows1:
	TESTQ R9, R9
	JZ    m12next
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	MOVQ   k+24(FP), CX

m112loop:
	VBROADCASTSD (AX), Y15
	VFMADD231PD  (BX), Y15, Y0
	VFMADD231PD  32(BX), Y15, Y1
	VFMADD231PD  64(BX), Y15, Y2
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m112loop
	VMOVUPD      Y0, (R11)
	VMOVUPD      Y1, 32(R11)
	VMOVUPD      Y2, 64(R11)
	ADDQ R8, SI
	ADDQ R13, R11
	DECQ R9
	JMP  m12rows1

m12next:
	ADDQ $96, DX
	ADDQ $96, DI
	SUBQ $12, R10
	JMP  mcols12

mcols4:
	CMPQ R10, $4
	JLT  mcolsm
	MOVQ a+0(FP), SI
	MOVQ DI, R11
	MOVQ m+8(FP), R9

m4rows4:
	CMPQ R9, $4
	JLT  m4rows1
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y3, Y3, Y3
	VXORPD Y6, Y6, Y6
	VXORPD Y9, Y9, Y9
	MOVQ   k+24(FP), CX

m44loop:
	VMOVUPD      (BX), Y12
	VBROADCASTSD (AX), Y15
	VFMADD231PD  Y12, Y15, Y0
	VBROADCASTSD (AX)(R8*1), Y15
	VFMADD231PD  Y12, Y15, Y3
	VBROADCASTSD (AX)(R8*2), Y15
	VFMADD231PD  Y12, Y15, Y6
	VBROADCASTSD (AX)(R12*1), Y15
	VFMADD231PD  Y12, Y15, Y9
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m44loop
	VMOVUPD      Y0, (R11)
	VMOVUPD      Y3, (R11)(R13*1)
	VMOVUPD      Y6, (R11)(R13*2)
	LEAQ         (R11)(R13*2), BX
	ADDQ         R13, BX
	VMOVUPD      Y9, (BX)
	LEAQ (SI)(R8*4), SI
	LEAQ (R11)(R13*4), R11
	SUBQ $4, R9
	JMP  m4rows4

m4rows1:
	TESTQ R9, R9
	JZ    m4next
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	MOVQ   k+24(FP), CX

m14loop:
	VBROADCASTSD (AX), Y15
	VFMADD231PD  (BX), Y15, Y0
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m14loop
	VMOVUPD      Y0, (R11)
	ADDQ R8, SI
	ADDQ R13, R11
	DECQ R9
	JMP  m4rows1

m4next:
	ADDQ $32, DX
	ADDQ $32, DI
	SUBQ $4, R10
	JMP  mcols4

mcolsm:
	TESTQ   R10, R10
	JZ      mdone
	SHLQ    $5, R10
	LEAQ    masks<>(SB), AX
	VMOVDQU (AX)(R10*1), Y14
	MOVQ a+0(FP), SI
	MOVQ DI, R11
	MOVQ m+8(FP), R9

mmrows4:
	CMPQ R9, $4
	JLT  mmrows1
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	VXORPD Y3, Y3, Y3
	VXORPD Y6, Y6, Y6
	VXORPD Y9, Y9, Y9
	MOVQ   k+24(FP), CX

m4mloop:
	VMASKMOVPD   (BX), Y14, Y12
	VBROADCASTSD (AX), Y15
	VFMADD231PD  Y12, Y15, Y0
	VBROADCASTSD (AX)(R8*1), Y15
	VFMADD231PD  Y12, Y15, Y3
	VBROADCASTSD (AX)(R8*2), Y15
	VFMADD231PD  Y12, Y15, Y6
	VBROADCASTSD (AX)(R12*1), Y15
	VFMADD231PD  Y12, Y15, Y9
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m4mloop
	VMASKMOVPD   Y0, Y14, (R11)
	LEAQ         (R11)(R13*1), BX
	VMASKMOVPD   Y3, Y14, (BX)
	ADDQ         R13, BX
	VMASKMOVPD   Y6, Y14, (BX)
	ADDQ         R13, BX
	VMASKMOVPD   Y9, Y14, (BX)
	LEAQ (SI)(R8*4), SI
	LEAQ (R11)(R13*4), R11
	SUBQ $4, R9
	JMP  mmrows4

mmrows1:
	TESTQ R9, R9
	JZ    mmnext
	MOVQ   SI, AX
	MOVQ   DX, BX
	VXORPD Y0, Y0, Y0
	MOVQ   k+24(FP), CX

m1mloop:
	VMASKMOVPD   (BX), Y14, Y12
	VBROADCASTSD (AX), Y15
	VFMADD231PD  Y12, Y15, Y0
	ADDQ         $8, AX
	ADDQ         R13, BX
	DECQ         CX
	JNZ          m1mloop
	VMASKMOVPD   Y0, Y14, (R11)
	ADDQ R8, SI
	ADDQ R13, R11
	DECQ R9
	JMP  mmrows1

mmnext:
mdone:
	VZEROUPPER
	RET

// Constants of expAVX2, each four times. The Taylor coefficients 1/i!
// (i = 13 down to 0) are at expPoly<>+32·(13−i).
DATA expLog2e<>+0(SB)/8, $0x3ff71547652b82fe
DATA expLog2e<>+8(SB)/8, $0x3ff71547652b82fe
DATA expLog2e<>+16(SB)/8, $0x3ff71547652b82fe
DATA expLog2e<>+24(SB)/8, $0x3ff71547652b82fe
GLOBL expLog2e<>(SB), RODATA|NOPTR, $32
DATA expLn2Hi<>+0(SB)/8, $0x3fe62e42fee00000
DATA expLn2Hi<>+8(SB)/8, $0x3fe62e42fee00000
DATA expLn2Hi<>+16(SB)/8, $0x3fe62e42fee00000
DATA expLn2Hi<>+24(SB)/8, $0x3fe62e42fee00000
GLOBL expLn2Hi<>(SB), RODATA|NOPTR, $32
DATA expLn2Lo<>+0(SB)/8, $0x3dea39ef35793c76
DATA expLn2Lo<>+8(SB)/8, $0x3dea39ef35793c76
DATA expLn2Lo<>+16(SB)/8, $0x3dea39ef35793c76
DATA expLn2Lo<>+24(SB)/8, $0x3dea39ef35793c76
GLOBL expLn2Lo<>(SB), RODATA|NOPTR, $32
DATA expMin<>+0(SB)/8, $0xc086200000000000
DATA expMin<>+8(SB)/8, $0xc086200000000000
DATA expMin<>+16(SB)/8, $0xc086200000000000
DATA expMin<>+24(SB)/8, $0xc086200000000000
GLOBL expMin<>(SB), RODATA|NOPTR, $32
DATA expBias<>+0(SB)/8, $1023
DATA expBias<>+8(SB)/8, $1023
DATA expBias<>+16(SB)/8, $1023
DATA expBias<>+24(SB)/8, $1023
GLOBL expBias<>(SB), RODATA|NOPTR, $32
DATA expPoly<>+0(SB)/8, $0x3de6124613a86d09
DATA expPoly<>+8(SB)/8, $0x3de6124613a86d09
DATA expPoly<>+16(SB)/8, $0x3de6124613a86d09
DATA expPoly<>+24(SB)/8, $0x3de6124613a86d09
DATA expPoly<>+32(SB)/8, $0x3e21eed8eff8d898
DATA expPoly<>+40(SB)/8, $0x3e21eed8eff8d898
DATA expPoly<>+48(SB)/8, $0x3e21eed8eff8d898
DATA expPoly<>+56(SB)/8, $0x3e21eed8eff8d898
DATA expPoly<>+64(SB)/8, $0x3e5ae64567f544e4
DATA expPoly<>+72(SB)/8, $0x3e5ae64567f544e4
DATA expPoly<>+80(SB)/8, $0x3e5ae64567f544e4
DATA expPoly<>+88(SB)/8, $0x3e5ae64567f544e4
DATA expPoly<>+96(SB)/8, $0x3e927e4fb7789f5c
DATA expPoly<>+104(SB)/8, $0x3e927e4fb7789f5c
DATA expPoly<>+112(SB)/8, $0x3e927e4fb7789f5c
DATA expPoly<>+120(SB)/8, $0x3e927e4fb7789f5c
DATA expPoly<>+128(SB)/8, $0x3ec71de3a556c734
DATA expPoly<>+136(SB)/8, $0x3ec71de3a556c734
DATA expPoly<>+144(SB)/8, $0x3ec71de3a556c734
DATA expPoly<>+152(SB)/8, $0x3ec71de3a556c734
DATA expPoly<>+160(SB)/8, $0x3efa01a01a01a01a
DATA expPoly<>+168(SB)/8, $0x3efa01a01a01a01a
DATA expPoly<>+176(SB)/8, $0x3efa01a01a01a01a
DATA expPoly<>+184(SB)/8, $0x3efa01a01a01a01a
DATA expPoly<>+192(SB)/8, $0x3f2a01a01a01a01a
DATA expPoly<>+200(SB)/8, $0x3f2a01a01a01a01a
DATA expPoly<>+208(SB)/8, $0x3f2a01a01a01a01a
DATA expPoly<>+216(SB)/8, $0x3f2a01a01a01a01a
DATA expPoly<>+224(SB)/8, $0x3f56c16c16c16c17
DATA expPoly<>+232(SB)/8, $0x3f56c16c16c16c17
DATA expPoly<>+240(SB)/8, $0x3f56c16c16c16c17
DATA expPoly<>+248(SB)/8, $0x3f56c16c16c16c17
DATA expPoly<>+256(SB)/8, $0x3f81111111111111
DATA expPoly<>+264(SB)/8, $0x3f81111111111111
DATA expPoly<>+272(SB)/8, $0x3f81111111111111
DATA expPoly<>+280(SB)/8, $0x3f81111111111111
DATA expPoly<>+288(SB)/8, $0x3fa5555555555555
DATA expPoly<>+296(SB)/8, $0x3fa5555555555555
DATA expPoly<>+304(SB)/8, $0x3fa5555555555555
DATA expPoly<>+312(SB)/8, $0x3fa5555555555555
DATA expPoly<>+320(SB)/8, $0x3fc5555555555555
DATA expPoly<>+328(SB)/8, $0x3fc5555555555555
DATA expPoly<>+336(SB)/8, $0x3fc5555555555555
DATA expPoly<>+344(SB)/8, $0x3fc5555555555555
DATA expPoly<>+352(SB)/8, $0x3fe0000000000000
DATA expPoly<>+360(SB)/8, $0x3fe0000000000000
DATA expPoly<>+368(SB)/8, $0x3fe0000000000000
DATA expPoly<>+376(SB)/8, $0x3fe0000000000000
DATA expPoly<>+384(SB)/8, $0x3ff0000000000000
DATA expPoly<>+392(SB)/8, $0x3ff0000000000000
DATA expPoly<>+400(SB)/8, $0x3ff0000000000000
DATA expPoly<>+408(SB)/8, $0x3ff0000000000000
DATA expPoly<>+416(SB)/8, $0x3ff0000000000000
DATA expPoly<>+424(SB)/8, $0x3ff0000000000000
DATA expPoly<>+432(SB)/8, $0x3ff0000000000000
DATA expPoly<>+440(SB)/8, $0x3ff0000000000000
GLOBL expPoly<>(SB), RODATA|NOPTR, $448

// EXP4 sets y to exp(x) for the four lanes of x, all ≤ 0 (lanes below
// −708 give 0); x is kept; t0–t3 are scratch, t2x the low half of t2.
#define EXP4(x, y, t0, t1, t2, t2x, t3) \
	VMAXPD       expMin<>(SB), x, t3 \
	VMULPD       expLog2e<>(SB), t3, t0 \
	VROUNDPD     $0, t0, t0 \
	VMOVUPD      expLn2Hi<>(SB), t1 \
	VFNMADD231PD t1, t0, t3 \
	VMOVUPD      expLn2Lo<>(SB), t1 \
	VFNMADD231PD t1, t0, t3 \
	VMOVUPD      expPoly<>+0(SB), y \
	VFMADD213PD  expPoly<>+32(SB), t3, y \
	VFMADD213PD  expPoly<>+64(SB), t3, y \
	VFMADD213PD  expPoly<>+96(SB), t3, y \
	VFMADD213PD  expPoly<>+128(SB), t3, y \
	VFMADD213PD  expPoly<>+160(SB), t3, y \
	VFMADD213PD  expPoly<>+192(SB), t3, y \
	VFMADD213PD  expPoly<>+224(SB), t3, y \
	VFMADD213PD  expPoly<>+256(SB), t3, y \
	VFMADD213PD  expPoly<>+288(SB), t3, y \
	VFMADD213PD  expPoly<>+320(SB), t3, y \
	VFMADD213PD  expPoly<>+352(SB), t3, y \
	VFMADD213PD  expPoly<>+384(SB), t3, y \
	VFMADD213PD  expPoly<>+416(SB), t3, y \
	VCVTPD2DQY   t0, t2x \
	VPMOVSXDQ    t2x, t2 \
	VPADDQ       expBias<>(SB), t2, t2 \
	VPSLLQ       $52, t2, t2 \
	VMULPD       t2, y, y \
	VCMPPD       $1, expMin<>(SB), x, t3 \
	VANDNPD      y, t3, y

// func expAVX2(x *float64, n int, out *float64)
//
// out[i] = exp(x[i]) for x[i] ≤ 0 (0 below −708): n = round(x/ln 2),
// r = x − n ln 2 in two parts (|r| ≤ ln2/2), exp(r) by its Taylor series to
// degree 13 (truncation below 5e-18 relative) with fused multiply–adds,
// times 2ⁿ. Four lanes at a time, the last n mod 4 with masked loads and
// stores.
TEXT ·expAVX2(SB), NOSPLIT, $0-24
	MOVQ x+0(FP), SI
	MOVQ n+8(FP), CX
	MOVQ out+16(FP), DI

exploop:
	CMPQ    CX, $4
	JLT     exptail
	VMOVUPD (SI), Y0
	EXP4(Y0, Y1, Y2, Y3, Y4, X4, Y5)
	VMOVUPD Y1, (DI)
	ADDQ    $32, SI
	ADDQ    $32, DI
	SUBQ    $4, CX
	JMP     exploop

exptail:
	TESTQ      CX, CX
	JZ         expdone
	SHLQ       $5, CX
	LEAQ       masks<>(SB), AX
	VMOVDQU    (AX)(CX*1), Y15
	VMASKMOVPD (SI), Y15, Y0
	EXP4(Y0, Y1, Y2, Y3, Y4, X4, Y5)
	VMASKMOVPD Y1, Y15, (DI)

expdone:
	VZEROUPPER
	RET

// func zRowsAVX2(phi, gx, gy, gz, half, bx, by, bz *float64, m, np int, z *float64)
//
// z[a·np+p] = half[p]·phi[a·np+p] + (bx[p]·gx[a·np+p] + by[p]·gy[a·np+p] +
// bz[p]·gz[a·np+p]) for the m rows, four points at a time and the last
// np mod 4 with masked loads and stores. Registers: SI, DI, R8, R9, R10
// the rows of phi, gx, gy, gz and z; R11, R12, R13, BX half, bx, by, bz;
// AX the byte offset in a row, CX its end for whole vectors, DX rows left,
// Y15 the tail mask.
TEXT ·zRowsAVX2(SB), NOSPLIT, $0-88
	MOVQ    np+72(FP), AX
	ANDQ    $3, AX
	SHLQ    $5, AX
	LEAQ    masks<>(SB), BX
	VMOVDQU (BX)(AX*1), Y15
	MOVQ    phi+0(FP), SI
	MOVQ    gx+8(FP), DI
	MOVQ    gy+16(FP), R8
	MOVQ    gz+24(FP), R9
	MOVQ    half+32(FP), R11
	MOVQ    bx+40(FP), R12
	MOVQ    by+48(FP), R13
	MOVQ    bz+56(FP), BX
	MOVQ    m+64(FP), DX
	MOVQ    np+72(FP), CX
	ANDQ    $-4, CX
	SHLQ    $3, CX
	MOVQ    z+80(FP), R10

zrow:
	XORQ AX, AX

zcol:
	CMPQ        AX, CX
	JGE         ztail
	VMOVUPD     (R12)(AX*1), Y0
	VMULPD      (DI)(AX*1), Y0, Y0
	VMOVUPD     (R13)(AX*1), Y1
	VFMADD231PD (R8)(AX*1), Y1, Y0
	VMOVUPD     (BX)(AX*1), Y1
	VFMADD231PD (R9)(AX*1), Y1, Y0
	VMOVUPD     (R11)(AX*1), Y1
	VFMADD231PD (SI)(AX*1), Y1, Y0
	VMOVUPD     Y0, (R10)(AX*1)
	ADDQ        $32, AX
	JMP         zcol

ztail:
	TESTQ       $3, np+72(FP)
	JZ          znext
	VMASKMOVPD  (R12)(AX*1), Y15, Y0
	VMASKMOVPD  (DI)(AX*1), Y15, Y2
	VMULPD      Y2, Y0, Y0
	VMASKMOVPD  (R13)(AX*1), Y15, Y1
	VMASKMOVPD  (R8)(AX*1), Y15, Y2
	VFMADD231PD Y2, Y1, Y0
	VMASKMOVPD  (BX)(AX*1), Y15, Y1
	VMASKMOVPD  (R9)(AX*1), Y15, Y2
	VFMADD231PD Y2, Y1, Y0
	VMASKMOVPD  (R11)(AX*1), Y15, Y1
	VMASKMOVPD  (SI)(AX*1), Y15, Y2
	VFMADD231PD Y2, Y1, Y0
	VMASKMOVPD  Y0, Y15, (R10)(AX*1)

znext:
	MOVQ np+72(FP), AX
	SHLQ $3, AX
	ADDQ AX, SI
	ADDQ AX, DI
	ADDQ AX, R8
	ADDQ AX, R9
	ADDQ AX, R10
	DECQ DX
	JNZ  zrow
	VZEROUPPER
	RET

// func cartesianRowsAVX2(v, ga, gb, gc, pa, pb, pc, la, lb, lc, rad, drad, da, db, dc *float64, t, tea, teb, tec float64, variant, np int)
//
// One Cartesian component over np points, four at a time, with the axes
// ordered so that the n with a positive exponent come first (a, b, c):
// P = p_a…(n factors), v = t·(P·R); with derivatives tPD = t·(P·R′) and
// g_j = tPD·d_j + te_j·(Q_j·R) as fused multiply–adds for those n axes
// (Q_j as in cartesianRowsGo), g_j = tPD·d_j for the others. The bodies
// CRV0–CRV3 (values) and CRG0–CRG3 (with derivatives) are expanded twice:
// with whole vectors (CRLD, CRST as plain loads and stores), then for the
// last np mod 4 points with the masked ones.
// Registers: AX byte offset of the points, CX points left, SI rad,
// DI drad, R8–R10 da, db, dc, R11 v, R13 pa, DX pb, R12 pc, BX la, R14
// scratch for the pointers read from the frame (lb, lc, ga, gb, gc);
// Y14 t, Y13 tea, Y12 teb, Y11 tec, Y15 the tail mask. (The macros are
// defined inside the function so that vet checks their frame offsets.)
TEXT ·cartesianRowsAVX2(SB), NOSPLIT, $0-168

#define CRLD(p, y) VMOVUPD (p)(AX*1), y
#define CRST(y, p) VMOVUPD y, (p)(AX*1)

#define CRV0 \
	CRLD(SI, Y0) \
	VMULPD Y14, Y0, Y0 \
	CRST(Y0, R11)

#define CRV1 \
	CRLD(R13, Y0) \
	CRLD(SI, Y1) \
	VMULPD Y1, Y0, Y0 \
	VMULPD Y14, Y0, Y0 \
	CRST(Y0, R11)

#define CRV2 \
	CRLD(R13, Y0) \
	CRLD(DX, Y1) \
	VMULPD Y1, Y0, Y0 \
	CRLD(SI, Y1) \
	VMULPD Y1, Y0, Y0 \
	VMULPD Y14, Y0, Y0 \
	CRST(Y0, R11)

#define CRV3 \
	CRLD(R13, Y0) \
	CRLD(DX, Y1) \
	VMULPD Y1, Y0, Y0 \
	CRLD(R12, Y1) \
	VMULPD Y1, Y0, Y0 \
	CRLD(SI, Y1) \
	VMULPD Y1, Y0, Y0 \
	VMULPD Y14, Y0, Y0 \
	CRST(Y0, R11)

// CRZERO stores g = tPD·d (tPD in Y2) for an axis of exponent 0.
#define CRZERO(d, g) \
	CRLD(d, Y4) \
	VMULPD Y4, Y2, Y4 \
	MOVQ g(FP), R14 \
	CRST(Y4, R14)

// CRAXIS stores g = tPD·d + te·(q·R) (q in a register, R in Y1, tPD in Y2)
// for an axis of positive exponent.
#define CRAXIS(q, te, d, g) \
	VMULPD Y1, q, q \
	VMULPD te, q, q \
	CRLD(d, Y4) \
	VFMADD231PD Y4, Y2, q \
	MOVQ g(FP), R14 \
	CRST(q, R14)

// CRPR sets v = t·(P·R) from P (register), leaves R in Y1 and tPD = t·(P·R′) in Y2.
#define CRPR(p) \
	CRLD(SI, Y1) \
	VMULPD Y1, p, Y2 \
	VMULPD Y14, Y2, Y2 \
	CRST(Y2, R11) \
	CRLD(DI, Y2) \
	VMULPD Y2, p, Y2 \
	VMULPD Y14, Y2, Y2

#define CRG0 \
	CRLD(SI, Y0) \
	VMULPD Y14, Y0, Y0 \
	CRST(Y0, R11) \
	CRLD(DI, Y2) \
	VMULPD Y14, Y2, Y2 \
	CRZERO(R8, ga+8) \
	CRZERO(R9, gb+16) \
	CRZERO(R10, gc+24)

#define CRG1 \
	CRLD(R13, Y0) \
	CRPR(Y0) \
	CRLD(BX, Y3) \
	CRAXIS(Y3, Y13, R8, ga+8) \
	CRZERO(R9, gb+16) \
	CRZERO(R10, gc+24)

#define CRG2 \
	CRLD(R13, Y0) \
	CRLD(DX, Y5) \
	VMULPD Y5, Y0, Y6 \
	CRPR(Y6) \
	CRLD(BX, Y3) \
	VMULPD Y5, Y3, Y3 \
	CRAXIS(Y3, Y13, R8, ga+8) \
	MOVQ lb+64(FP), R14 \
	CRLD(R14, Y3) \
	VMULPD Y3, Y0, Y3 \
	CRAXIS(Y3, Y12, R9, gb+16) \
	CRZERO(R10, gc+24)

#define CRG3 \
	CRLD(R13, Y0) \
	CRLD(DX, Y5) \
	VMULPD Y5, Y0, Y7 \
	CRLD(R12, Y6) \
	VMULPD Y6, Y7, Y8 \
	CRPR(Y8) \
	VMULPD Y6, Y5, Y3 \
	CRLD(BX, Y4) \
	VMULPD Y3, Y4, Y3 \
	CRAXIS(Y3, Y13, R8, ga+8) \
	MOVQ lb+64(FP), R14 \
	CRLD(R14, Y3) \
	VMULPD Y3, Y0, Y3 \
	VMULPD Y6, Y3, Y3 \
	CRAXIS(Y3, Y12, R9, gb+16) \
	MOVQ lc+72(FP), R14 \
	CRLD(R14, Y3) \
	VMULPD Y3, Y7, Y3 \
	CRAXIS(Y3, Y11, R10, gc+24)

// CRLOOP runs body over the whole vectors of points, then jumps to tail.
#define CRLOOP(loop, body, tail) \
loop: \
	CMPQ CX, $4 \
	JLT  tail \
	body \
	ADDQ $32, AX \
	SUBQ $4, CX \
	JMP  loop

	MOVQ         v+0(FP), R11
	MOVQ         pa+32(FP), R13
	MOVQ         pb+40(FP), DX
	MOVQ         pc+48(FP), R12
	MOVQ         la+56(FP), BX
	MOVQ         rad+80(FP), SI
	MOVQ         drad+88(FP), DI
	MOVQ         da+96(FP), R8
	MOVQ         db+104(FP), R9
	MOVQ         dc+112(FP), R10
	VBROADCASTSD t+120(FP), Y14
	VBROADCASTSD tea+128(FP), Y13
	VBROADCASTSD teb+136(FP), Y12
	VBROADCASTSD tec+144(FP), Y11
	MOVQ         np+160(FP), CX
	XORQ         AX, AX
	MOVQ         variant+152(FP), R14
	CMPQ         R14, $4
	JGE          crgrad
	CMPQ         R14, $1
	JLT          crv0
	JEQ          crv1
	CMPQ         R14, $2
	JEQ          crv2
	JMP          crv3

crgrad:
	CMPQ R14, $5
	JLT  crg0
	JEQ  crg1
	CMPQ R14, $6
	JEQ  crg2
	JMP  crg3

	CRLOOP(crv0, CRV0, crv0t)
	CRLOOP(crv1, CRV1, crv1t)
	CRLOOP(crv2, CRV2, crv2t)
	CRLOOP(crv3, CRV3, crv3t)
	CRLOOP(crg0, CRG0, crg0t)
	CRLOOP(crg1, CRG1, crg1t)
	CRLOOP(crg2, CRG2, crg2t)
	CRLOOP(crg3, CRG3, crg3t)

// The last np mod 4 points, with masked loads and stores.
#undef CRLD
#undef CRST
#define CRLD(p, y) VMASKMOVPD (p)(AX*1), Y15, y
#define CRST(y, p) VMASKMOVPD y, Y15, (p)(AX*1)

// CRTAIL runs body once on the CX < 4 points left, if any.
#define CRTAIL(tail, body) \
tail: \
	TESTQ   CX, CX \
	JZ      crdone \
	SHLQ    $5, CX \
	LEAQ    masks<>(SB), R14 \
	VMOVDQU (R14)(CX*1), Y15 \
	body \
	JMP     crdone

	CRTAIL(crv0t, CRV0)
	CRTAIL(crv1t, CRV1)
	CRTAIL(crv2t, CRV2)
	CRTAIL(crv3t, CRV3)
	CRTAIL(crg0t, CRG0)
	CRTAIL(crg1t, CRG1)
	CRTAIL(crg2t, CRG2)
	CRTAIL(crg3t, CRG3)

crdone:
	VZEROUPPER
	RET

// func cartesianDerivsAVX2(out *[10]*float64, in *[15]*float64, k *[7]float64, nc, ld, np, variant int)
//
// The nc components of a shell over np points, four at a time, all the
// components of four points before the next four, with the arithmetic of
// cartesianComponentGo (every product feeding a sum fused into it): CDG1
// the value and first derivatives, CDG2 the second derivatives, CDS1 and
// CDS2 the same for an s function. The four lanes of a result go to the
// four points' elements of a point-major block (stride ld), component c in
// column c. The bodies are expanded twice: for the whole vectors, then for
// the last np mod 4 points with masked loads and the results stored in the
// local buffer (ten rows of four), from which the valid lanes are copied.
// Registers: AX byte offset of the points in the inputs, DI that of the
// outputs (p·ld·8), R11 that plus 8c for component c, BX in[c], R10 k[c],
// DX out, R8 = 8·ld, R9 = 24·ld, R13 = 32·ld, R14 components left, CX
// points left, SI scratch, R12 the local buffer; Y14 t of the component,
// Y15 the tail mask, Y13 scratch of the stores.
TEXT ·cartesianDerivsAVX2(SB), NOSPLIT, $320-56

#define CDLD(i, y) \
	MOVQ    i*8(BX), SI \
	VMOVUPD (SI)(AX*1), y

#define CDST(y, x, i) \
	MOVQ         i*8(DX), SI \
	ADDQ         R11, SI \
	VMOVSD       x, (SI) \
	VMOVHPD      x, (SI)(R8*1) \
	VEXTRACTF128 $1, y, X13 \
	VMOVSD       X13, (SI)(R8*2) \
	VMOVHPD      X13, (SI)(R9*1)

#define CDK(i, y) VBROADCASTSD i*8(R10), y

// CDG1 leaves yz, xz, xy in Y3–Y5, P in Y6, T = t·R in Y7, T1 = t·R′ in
// Y8, P·T1 in Y9 and p_x, p_y, p_z in Y10–Y12 for CDG2.
#define CDG1 \
	CDLD(0, Y0) \
	CDLD(1, Y1) \
	CDLD(2, Y2) \
	VMULPD      Y2, Y1, Y3 \
	VMULPD      Y2, Y0, Y4 \
	VMULPD      Y1, Y0, Y5 \
	VMULPD      Y3, Y0, Y6 \
	CDLD(9, Y7) \
	VMULPD      Y14, Y7, Y7 \
	VMULPD      Y7, Y6, Y0 \
	CDST(Y0, X0, 0) \
	CDLD(10, Y8) \
	VMULPD      Y14, Y8, Y8 \
	VMULPD      Y8, Y6, Y9 \
	CDLD(3, Y0) \
	CDK(0, Y1) \
	VMULPD      Y1, Y0, Y0 \
	VMULPD      Y3, Y0, Y10 \
	CDLD(4, Y0) \
	CDK(1, Y1) \
	VMULPD      Y1, Y0, Y0 \
	VMULPD      Y4, Y0, Y11 \
	CDLD(5, Y0) \
	CDK(2, Y1) \
	VMULPD      Y1, Y0, Y0 \
	VMULPD      Y5, Y0, Y12 \
	VMULPD      Y7, Y10, Y0 \
	CDLD(12, Y1) \
	VFMADD231PD Y1, Y9, Y0 \
	CDST(Y0, X0, 1) \
	VMULPD      Y7, Y11, Y0 \
	CDLD(13, Y1) \
	VFMADD231PD Y1, Y9, Y0 \
	CDST(Y0, X0, 2) \
	VMULPD      Y7, Y12, Y0 \
	CDLD(14, Y1) \
	VFMADD231PD Y1, Y9, Y0 \
	CDST(Y0, X0, 3)

// CDDIAG stores ∂_j∂_jφ = ((x_2·O)·T + P·T1) + (u + s)·x_j from the row of
// the lower power li, the factor ki, O, u, s and x_j (registers).
#define CDDIAG(li, ki, o, u, s, r, i) \
	CDLD(li, Y2) \
	CDK(ki, Y8) \
	VMULPD      Y8, Y2, Y2 \
	VMULPD      o, Y2, Y2 \
	VFMADD213PD Y9, Y7, Y2 \
	VADDPD      s, u, Y8 \
	VFMADD231PD r, Y8, Y2 \
	CDST(Y2, X2, i)

// CDG2 turns p_j into s_j = p_j·T1 (Y10–Y12), P into P·T2 (Y6), and
// stores the six second derivatives; u_j is in Y1, x_j in Y0.
#define CDG2 \
	CDLD(11, Y0) \
	VMULPD      Y14, Y0, Y0 \
	VMULPD      Y0, Y6, Y6 \
	VMULPD      Y8, Y10, Y10 \
	VMULPD      Y8, Y11, Y11 \
	VMULPD      Y8, Y12, Y12 \
	CDLD(12, Y0) \
	VMOVAPD     Y10, Y1 \
	VFMADD231PD Y0, Y6, Y1 \
	CDDIAG(6, 3, Y3, Y1, Y10, Y0, 4) \
	CDLD(3, Y2) \
	CDK(0, Y8) \
	VMULPD      Y8, Y2, Y2 \
	CDLD(4, Y8) \
	CDK(1, Y13) \
	VMULPD      Y13, Y8, Y8 \
	VMULPD      Y8, Y2, Y8 \
	CDLD(2, Y13) \
	VMULPD      Y13, Y8, Y8 \
	VMULPD      Y7, Y8, Y8 \
	VFMADD231PD Y0, Y11, Y8 \
	CDLD(13, Y13) \
	VFMADD231PD Y13, Y1, Y8 \
	CDST(Y8, X8, 5) \
	CDLD(5, Y8) \
	CDK(2, Y13) \
	VMULPD      Y13, Y8, Y8 \
	VMULPD      Y8, Y2, Y2 \
	CDLD(1, Y8) \
	VMULPD      Y8, Y2, Y2 \
	VMULPD      Y7, Y2, Y2 \
	VFMADD231PD Y0, Y12, Y2 \
	CDLD(14, Y8) \
	VFMADD231PD Y8, Y1, Y2 \
	CDST(Y2, X2, 6) \
	CDLD(13, Y0) \
	VMOVAPD     Y11, Y1 \
	VFMADD231PD Y0, Y6, Y1 \
	CDDIAG(7, 4, Y4, Y1, Y11, Y0, 7) \
	CDLD(4, Y2) \
	CDK(1, Y8) \
	VMULPD      Y8, Y2, Y2 \
	CDLD(5, Y8) \
	CDK(2, Y13) \
	VMULPD      Y13, Y8, Y8 \
	VMULPD      Y8, Y2, Y2 \
	CDLD(0, Y8) \
	VMULPD      Y8, Y2, Y2 \
	VMULPD      Y7, Y2, Y2 \
	VFMADD231PD Y0, Y12, Y2 \
	CDLD(14, Y0) \
	VFMADD231PD Y0, Y1, Y2 \
	CDST(Y2, X2, 8) \
	VMOVAPD     Y12, Y1 \
	VFMADD231PD Y0, Y6, Y1 \
	CDDIAG(8, 5, Y5, Y1, Y12, Y0, 9)

// CDS1 leaves T1 = t·R′ in Y8 for CDS2.
#define CDS1 \
	CDLD(9, Y0) \
	VMULPD Y14, Y0, Y0 \
	CDST(Y0, X0, 0) \
	CDLD(10, Y8) \
	VMULPD Y14, Y8, Y8 \
	CDLD(12, Y0) \
	VMULPD Y0, Y8, Y0 \
	CDST(Y0, X0, 1) \
	CDLD(13, Y0) \
	VMULPD Y0, Y8, Y0 \
	CDST(Y0, X0, 2) \
	CDLD(14, Y0) \
	VMULPD Y0, Y8, Y0 \
	CDST(Y0, X0, 3)

// CDS2: u_j = (t·R″)·x_j in Y1, x, y, z in Y0, Y3, Y4.
#define CDS2 \
	CDLD(11, Y6) \
	VMULPD      Y14, Y6, Y6 \
	CDLD(12, Y0) \
	CDLD(13, Y3) \
	CDLD(14, Y4) \
	VMULPD      Y0, Y6, Y1 \
	VMOVAPD     Y8, Y2 \
	VFMADD231PD Y0, Y1, Y2 \
	CDST(Y2, X2, 4) \
	VMULPD      Y3, Y1, Y2 \
	CDST(Y2, X2, 5) \
	VMULPD      Y4, Y1, Y2 \
	CDST(Y2, X2, 6) \
	VMULPD      Y3, Y6, Y1 \
	VMOVAPD     Y8, Y2 \
	VFMADD231PD Y3, Y1, Y2 \
	CDST(Y2, X2, 7) \
	VMULPD      Y4, Y1, Y2 \
	CDST(Y2, X2, 8) \
	VMULPD      Y4, Y6, Y1 \
	VMOVAPD     Y8, Y2 \
	VFMADD231PD Y4, Y1, Y2 \
	CDST(Y2, X2, 9)

// CDCOMPS runs body for the components of the four points at AX (inputs)
// and DI (outputs).
#define CDCOMPS(comp, body) \
	MOVQ         DI, R11 \
	MOVQ         in+8(FP), BX \
	MOVQ         k+16(FP), R10 \
	MOVQ         nc+24(FP), R14 \
comp: \
	VBROADCASTSD 48(R10), Y14 \
	body \
	ADDQ         $120, BX \
	ADDQ         $56, R10 \
	ADDQ         $8, R11 \
	DECQ         R14 \
	JNZ          comp

// CDLOOP runs body over the whole vectors of points, then jumps to tail.
#define CDLOOP(loop, comp, body, tail) \
loop: \
	CMPQ CX, $4 \
	JLT  tail \
	CDCOMPS(comp, body) \
	ADDQ $32, AX \
	ADDQ R13, DI \
	SUBQ $4, CX \
	JMP  loop

	MOVQ   out+0(FP), DX
	MOVQ   ld+32(FP), R8
	SHLQ   $3, R8
	LEAQ   (R8)(R8*2), R9
	MOVQ   R8, R13
	SHLQ   $2, R13
	MOVQ   np+40(FP), CX
	LEAQ   buf-320(SP), R12
	XORQ   AX, AX
	XORQ   DI, DI
	MOVQ   variant+48(FP), R11
	CMPQ   R11, $1
	JLT    cdg1
	JEQ    cdg2
	CMPQ   R11, $3
	JLT    cds1
	JMP    cds2

#define CDG12 CDG1 \
	CDG2
#define CDS12 CDS1 \
	CDS2

	CDLOOP(cdg1, cdg1c, CDG1, cdg1t)
	CDLOOP(cdg2, cdg2c, CDG12, cdg2t)
	CDLOOP(cds1, cds1c, CDS1, cds1t)
	CDLOOP(cds2, cds2c, CDS12, cds2t)

// The last np mod 4 points: masked loads, results to the local buffer,
// whose first CX lanes (CX now in bytes) CDCOPY4 and CDCOPY10 copy out.
#undef CDLD
#undef CDST
#define CDLD(i, y) \
	MOVQ       i*8(BX), SI \
	VMASKMOVPD (SI)(AX*1), Y15, y
#define CDST(y, x, i) VMOVUPD y, i*32(R12)

// CDCOPY copies row i of the buffer, lane R13/8, to its output; R9 is
// the lane's offset in the output.
#define CDCOPY(i) \
	MOVQ   i*8(DX), SI \
	ADDQ   R11, SI \
	VMOVSD i*32(R12)(R13*1), X0 \
	VMOVSD X0, (SI)(R9*1)

#define CDCOPY4 CDCOPY(0) \
	CDCOPY(1) \
	CDCOPY(2) \
	CDCOPY(3)

#define CDCOPY10 CDCOPY4 \
	CDCOPY(4) \
	CDCOPY(5) \
	CDCOPY(6) \
	CDCOPY(7) \
	CDCOPY(8) \
	CDCOPY(9)

// CDTAIL runs body and then copy for each component of the CX < 4 points
// left, if any.
#define CDTAIL(tail, comp, lane, body, copy) \
tail: \
	TESTQ        CX, CX \
	JZ           cddone \
	MOVQ         CX, SI \
	SHLQ         $5, SI \
	LEAQ         masks<>(SB), R11 \
	VMOVDQU      (R11)(SI*1), Y15 \
	SHLQ         $3, CX \
	MOVQ         DI, R11 \
	MOVQ         in+8(FP), BX \
	MOVQ         k+16(FP), R10 \
	MOVQ         nc+24(FP), R14 \
comp: \
	VBROADCASTSD 48(R10), Y14 \
	body \
	XORQ         R9, R9 \
	XORQ         R13, R13 \
lane: \
	copy \
	ADDQ         R8, R9 \
	ADDQ         $8, R13 \
	CMPQ         R13, CX \
	JLT          lane \
	ADDQ         $120, BX \
	ADDQ         $56, R10 \
	ADDQ         $8, R11 \
	DECQ         R14 \
	JNZ          comp \
	JMP          cddone

	CDTAIL(cdg1t, cdg1tc, cdg1tl, CDG1, CDCOPY4)
	CDTAIL(cdg2t, cdg2tc, cdg2tl, CDG12, CDCOPY10)
	CDTAIL(cds1t, cds1tc, cds1tl, CDS1, CDCOPY4)
	CDTAIL(cds2t, cds2tc, cds2tl, CDS12, CDCOPY10)

cddone:
	VZEROUPPER
	RET
