//! The 24 × 8 micro-kernel of the packed rank-k update ([`super::packed`]): the product of a
//! 24-row strip of B with the transpose of an 8-row strip, over kc columns of B,
//!
//!   out_(j·24 + i) = Σ_(p < kc) A_(i p) B_(j p),  i < 24, j < 8,
//!
//! both strips read from the packed layout of [`super::packed`]: 8-row panels, each kc × 8
//! values stored column of B by column (`panel[p·8 + r]`), the 24 rows of A being three
//! consecutive panels `panel_stride` values apart. This is the register-blocked inner kernel
//! of the usual blocked matrix product (Goto & van de Geijn, "Anatomy of high-performance
//! matrix multiplication", ACM TOMS 34(3), 2008): 24 × 8 accumulators, 3 zmm registers of A
//! and one broadcast of B per column, 24 fused multiply–adds per column of B.
//!
//! [`micro_reference`] is the plain scalar definition; [`micro_avx512`] the same in AVX-512F
//! inline assembly (the AVX-512 intrinsics are newer than the workspace's minimum Rust
//! version, and faer's own kernels stop at 256-bit vectors on the stable compiler). Both
//! accumulate each output from p = 0 upwards, one fused multiply–add per p in the AVX-512
//! copy, a multiply then an add in the scalar one.

/// Rows of the A strip.
pub const MICRO_ROWS: usize = 24;
/// Rows of the B strip (columns of the output).
pub const MICRO_COLS: usize = 8;
/// Rows per packed panel (one 512-bit vector of doubles).
pub const PANEL_ROWS: usize = 8;
/// Values of one micro-kernel output.
pub const MICRO_OUT: usize = MICRO_ROWS * MICRO_COLS;

/// out_(j·24 + i) = Σ_(p < kc) A_(i p) B_(j p), with A_(i p) = `a[(i / 8)·panel_stride + p·8 +
/// i % 8]` and B_(j p) = `b[p·8 + j]`: the scalar reference of [`micro_avx512`].
pub fn micro_reference(
    kc: usize,
    a: &[f64],
    panel_stride: usize,
    b: &[f64],
    out: &mut [f64; MICRO_OUT],
) {
    check_strips(kc, a, panel_stride, b);
    for j in 0..MICRO_COLS {
        for i in 0..MICRO_ROWS {
            let a0 = (i / PANEL_ROWS) * panel_stride + i % PANEL_ROWS;
            let mut sum = 0.0;
            for p in 0..kc {
                sum += a[a0 + p * PANEL_ROWS] * b[p * PANEL_ROWS + j];
            }
            out[j * MICRO_ROWS + i] = sum;
        }
    }
}

/// Panics unless the strips hold kc columns (and kc ≥ 1): what both kernels read.
fn check_strips(kc: usize, a: &[f64], panel_stride: usize, b: &[f64]) {
    assert!(kc >= 1, "the micro-kernel needs at least one column");
    assert!(panel_stride >= kc * PANEL_ROWS, "panels overlap");
    assert!(
        a.len() >= 2 * panel_stride + kc * PANEL_ROWS,
        "A strip too short"
    );
    assert!(b.len() >= kc * PANEL_ROWS, "B strip too short");
}

/// As [`micro_reference`], in AVX-512F assembly.
///
/// # Safety
///
/// The CPU must have AVX-512F (`KernelPath::Avx512.is_supported()`).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
#[allow(unsafe_code)]
pub unsafe fn micro_avx512(
    kc: usize,
    a: &[f64],
    panel_stride: usize,
    b: &[f64],
    out: &mut [f64; MICRO_OUT],
) {
    check_strips(kc, a, panel_stride, b);
    // SAFETY: the strips hold what the loop reads (checked above: kc columns of three panels
    // `panel_stride` apart, and of one panel), `out` holds the 24 stored vectors, and the
    // caller guarantees AVX-512F. Every register written is declared.
    unsafe {
        std::arch::asm!(
            "vpxorq zmm0, zmm0, zmm0",
            "vpxorq zmm1, zmm1, zmm1",
            "vpxorq zmm2, zmm2, zmm2",
            "vpxorq zmm3, zmm3, zmm3",
            "vpxorq zmm4, zmm4, zmm4",
            "vpxorq zmm5, zmm5, zmm5",
            "vpxorq zmm6, zmm6, zmm6",
            "vpxorq zmm7, zmm7, zmm7",
            "vpxorq zmm8, zmm8, zmm8",
            "vpxorq zmm9, zmm9, zmm9",
            "vpxorq zmm10, zmm10, zmm10",
            "vpxorq zmm11, zmm11, zmm11",
            "vpxorq zmm12, zmm12, zmm12",
            "vpxorq zmm13, zmm13, zmm13",
            "vpxorq zmm14, zmm14, zmm14",
            "vpxorq zmm15, zmm15, zmm15",
            "vpxorq zmm16, zmm16, zmm16",
            "vpxorq zmm17, zmm17, zmm17",
            "vpxorq zmm18, zmm18, zmm18",
            "vpxorq zmm19, zmm19, zmm19",
            "vpxorq zmm20, zmm20, zmm20",
            "vpxorq zmm21, zmm21, zmm21",
            "vpxorq zmm22, zmm22, zmm22",
            "vpxorq zmm23, zmm23, zmm23",
            "2:",
            "vmovupd zmm24, [{a}]",
            "vmovupd zmm25, [{a} + {s}]",
            "vmovupd zmm26, [{a} + {s}*2]",
            "vbroadcastsd zmm27, qword ptr [{b} + 0]",
            "vfmadd231pd zmm0, zmm24, zmm27",
            "vfmadd231pd zmm1, zmm25, zmm27",
            "vfmadd231pd zmm2, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 8]",
            "vfmadd231pd zmm3, zmm24, zmm28",
            "vfmadd231pd zmm4, zmm25, zmm28",
            "vfmadd231pd zmm5, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 16]",
            "vfmadd231pd zmm6, zmm24, zmm27",
            "vfmadd231pd zmm7, zmm25, zmm27",
            "vfmadd231pd zmm8, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 24]",
            "vfmadd231pd zmm9, zmm24, zmm28",
            "vfmadd231pd zmm10, zmm25, zmm28",
            "vfmadd231pd zmm11, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 32]",
            "vfmadd231pd zmm12, zmm24, zmm27",
            "vfmadd231pd zmm13, zmm25, zmm27",
            "vfmadd231pd zmm14, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 40]",
            "vfmadd231pd zmm15, zmm24, zmm28",
            "vfmadd231pd zmm16, zmm25, zmm28",
            "vfmadd231pd zmm17, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 48]",
            "vfmadd231pd zmm18, zmm24, zmm27",
            "vfmadd231pd zmm19, zmm25, zmm27",
            "vfmadd231pd zmm20, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 56]",
            "vfmadd231pd zmm21, zmm24, zmm28",
            "vfmadd231pd zmm22, zmm25, zmm28",
            "vfmadd231pd zmm23, zmm26, zmm28",
            "add {a}, 64",
            "add {b}, 64",
            "dec {k}",
            "jnz 2b",
            "vmovupd [{out} + 0], zmm0",
            "vmovupd [{out} + 64], zmm1",
            "vmovupd [{out} + 128], zmm2",
            "vmovupd [{out} + 192], zmm3",
            "vmovupd [{out} + 256], zmm4",
            "vmovupd [{out} + 320], zmm5",
            "vmovupd [{out} + 384], zmm6",
            "vmovupd [{out} + 448], zmm7",
            "vmovupd [{out} + 512], zmm8",
            "vmovupd [{out} + 576], zmm9",
            "vmovupd [{out} + 640], zmm10",
            "vmovupd [{out} + 704], zmm11",
            "vmovupd [{out} + 768], zmm12",
            "vmovupd [{out} + 832], zmm13",
            "vmovupd [{out} + 896], zmm14",
            "vmovupd [{out} + 960], zmm15",
            "vmovupd [{out} + 1024], zmm16",
            "vmovupd [{out} + 1088], zmm17",
            "vmovupd [{out} + 1152], zmm18",
            "vmovupd [{out} + 1216], zmm19",
            "vmovupd [{out} + 1280], zmm20",
            "vmovupd [{out} + 1344], zmm21",
            "vmovupd [{out} + 1408], zmm22",
            "vmovupd [{out} + 1472], zmm23",
            "vzeroupper",
            a = inout(reg) a.as_ptr() => _,
            b = inout(reg) b.as_ptr() => _,
            k = inout(reg) kc => _,
            s = in(reg) panel_stride * 8,
            out = in(reg) out.as_mut_ptr(),
            out("zmm0") _,
            out("zmm1") _,
            out("zmm2") _,
            out("zmm3") _,
            out("zmm4") _,
            out("zmm5") _,
            out("zmm6") _,
            out("zmm7") _,
            out("zmm8") _,
            out("zmm9") _,
            out("zmm10") _,
            out("zmm11") _,
            out("zmm12") _,
            out("zmm13") _,
            out("zmm14") _,
            out("zmm15") _,
            out("zmm16") _,
            out("zmm17") _,
            out("zmm18") _,
            out("zmm19") _,
            out("zmm20") _,
            out("zmm21") _,
            out("zmm22") _,
            out("zmm23") _,
            out("zmm24") _,
            out("zmm25") _,
            out("zmm26") _,
            out("zmm27") _,
            out("zmm28") _,
            options(nostack),
        );
    }
}

/// C_(i j) += Σ_(p < kc) A_(i p) B_(j p) for the 24 × 8 block of C at `c` (column-major,
/// columns `ldc` values apart), as [`micro_reference`] followed by the addition, in AVX-512F
/// assembly; the 8 columns of C are prefetched before the loop over p, so their cache misses
/// overlap the products.
///
/// # Safety
///
/// The CPU must have AVX-512F, and `c + j·ldc + i` (i < 24, j < 8) must be valid for reads
/// and writes, not aliased by anything else during the call.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
#[allow(unsafe_code)]
pub unsafe fn micro_avx512_add(
    kc: usize,
    a: &[f64],
    panel_stride: usize,
    b: &[f64],
    c: *mut f64,
    ldc: usize,
) {
    check_strips(kc, a, panel_stride, b);
    // SAFETY: the strips hold what the loop reads (checked above); the caller guarantees the
    // block of C and AVX-512F. Every register written is declared.
    unsafe {
        std::arch::asm!(
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "prefetcht0 [{cp} + 0]",
            "prefetcht0 [{cp} + 64]",
            "prefetcht0 [{cp} + 128]",
            "prefetcht0 [{cp} + 184]",
            "add {cp}, {ldc}",
            "vpxorq zmm0, zmm0, zmm0",
            "vpxorq zmm1, zmm1, zmm1",
            "vpxorq zmm2, zmm2, zmm2",
            "vpxorq zmm3, zmm3, zmm3",
            "vpxorq zmm4, zmm4, zmm4",
            "vpxorq zmm5, zmm5, zmm5",
            "vpxorq zmm6, zmm6, zmm6",
            "vpxorq zmm7, zmm7, zmm7",
            "vpxorq zmm8, zmm8, zmm8",
            "vpxorq zmm9, zmm9, zmm9",
            "vpxorq zmm10, zmm10, zmm10",
            "vpxorq zmm11, zmm11, zmm11",
            "vpxorq zmm12, zmm12, zmm12",
            "vpxorq zmm13, zmm13, zmm13",
            "vpxorq zmm14, zmm14, zmm14",
            "vpxorq zmm15, zmm15, zmm15",
            "vpxorq zmm16, zmm16, zmm16",
            "vpxorq zmm17, zmm17, zmm17",
            "vpxorq zmm18, zmm18, zmm18",
            "vpxorq zmm19, zmm19, zmm19",
            "vpxorq zmm20, zmm20, zmm20",
            "vpxorq zmm21, zmm21, zmm21",
            "vpxorq zmm22, zmm22, zmm22",
            "vpxorq zmm23, zmm23, zmm23",
            "2:",
            "vmovupd zmm24, [{a}]",
            "vmovupd zmm25, [{a} + {s}]",
            "vmovupd zmm26, [{a} + {s}*2]",
            "vbroadcastsd zmm27, qword ptr [{b} + 0]",
            "vfmadd231pd zmm0, zmm24, zmm27",
            "vfmadd231pd zmm1, zmm25, zmm27",
            "vfmadd231pd zmm2, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 8]",
            "vfmadd231pd zmm3, zmm24, zmm28",
            "vfmadd231pd zmm4, zmm25, zmm28",
            "vfmadd231pd zmm5, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 16]",
            "vfmadd231pd zmm6, zmm24, zmm27",
            "vfmadd231pd zmm7, zmm25, zmm27",
            "vfmadd231pd zmm8, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 24]",
            "vfmadd231pd zmm9, zmm24, zmm28",
            "vfmadd231pd zmm10, zmm25, zmm28",
            "vfmadd231pd zmm11, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 32]",
            "vfmadd231pd zmm12, zmm24, zmm27",
            "vfmadd231pd zmm13, zmm25, zmm27",
            "vfmadd231pd zmm14, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 40]",
            "vfmadd231pd zmm15, zmm24, zmm28",
            "vfmadd231pd zmm16, zmm25, zmm28",
            "vfmadd231pd zmm17, zmm26, zmm28",
            "vbroadcastsd zmm27, qword ptr [{b} + 48]",
            "vfmadd231pd zmm18, zmm24, zmm27",
            "vfmadd231pd zmm19, zmm25, zmm27",
            "vfmadd231pd zmm20, zmm26, zmm27",
            "vbroadcastsd zmm28, qword ptr [{b} + 56]",
            "vfmadd231pd zmm21, zmm24, zmm28",
            "vfmadd231pd zmm22, zmm25, zmm28",
            "vfmadd231pd zmm23, zmm26, zmm28",
            "add {a}, 64",
            "add {b}, 64",
            "dec {k}",
            "jnz 2b",
            "vaddpd zmm0, zmm0, [{c} + 0]",
            "vmovupd [{c} + 0], zmm0",
            "vaddpd zmm1, zmm1, [{c} + 64]",
            "vmovupd [{c} + 64], zmm1",
            "vaddpd zmm2, zmm2, [{c} + 128]",
            "vmovupd [{c} + 128], zmm2",
            "add {c}, {ldc}",
            "vaddpd zmm3, zmm3, [{c} + 0]",
            "vmovupd [{c} + 0], zmm3",
            "vaddpd zmm4, zmm4, [{c} + 64]",
            "vmovupd [{c} + 64], zmm4",
            "vaddpd zmm5, zmm5, [{c} + 128]",
            "vmovupd [{c} + 128], zmm5",
            "add {c}, {ldc}",
            "vaddpd zmm6, zmm6, [{c} + 0]",
            "vmovupd [{c} + 0], zmm6",
            "vaddpd zmm7, zmm7, [{c} + 64]",
            "vmovupd [{c} + 64], zmm7",
            "vaddpd zmm8, zmm8, [{c} + 128]",
            "vmovupd [{c} + 128], zmm8",
            "add {c}, {ldc}",
            "vaddpd zmm9, zmm9, [{c} + 0]",
            "vmovupd [{c} + 0], zmm9",
            "vaddpd zmm10, zmm10, [{c} + 64]",
            "vmovupd [{c} + 64], zmm10",
            "vaddpd zmm11, zmm11, [{c} + 128]",
            "vmovupd [{c} + 128], zmm11",
            "add {c}, {ldc}",
            "vaddpd zmm12, zmm12, [{c} + 0]",
            "vmovupd [{c} + 0], zmm12",
            "vaddpd zmm13, zmm13, [{c} + 64]",
            "vmovupd [{c} + 64], zmm13",
            "vaddpd zmm14, zmm14, [{c} + 128]",
            "vmovupd [{c} + 128], zmm14",
            "add {c}, {ldc}",
            "vaddpd zmm15, zmm15, [{c} + 0]",
            "vmovupd [{c} + 0], zmm15",
            "vaddpd zmm16, zmm16, [{c} + 64]",
            "vmovupd [{c} + 64], zmm16",
            "vaddpd zmm17, zmm17, [{c} + 128]",
            "vmovupd [{c} + 128], zmm17",
            "add {c}, {ldc}",
            "vaddpd zmm18, zmm18, [{c} + 0]",
            "vmovupd [{c} + 0], zmm18",
            "vaddpd zmm19, zmm19, [{c} + 64]",
            "vmovupd [{c} + 64], zmm19",
            "vaddpd zmm20, zmm20, [{c} + 128]",
            "vmovupd [{c} + 128], zmm20",
            "add {c}, {ldc}",
            "vaddpd zmm21, zmm21, [{c} + 0]",
            "vmovupd [{c} + 0], zmm21",
            "vaddpd zmm22, zmm22, [{c} + 64]",
            "vmovupd [{c} + 64], zmm22",
            "vaddpd zmm23, zmm23, [{c} + 128]",
            "vmovupd [{c} + 128], zmm23",
            "vzeroupper",
            a = inout(reg) a.as_ptr() => _,
            b = inout(reg) b.as_ptr() => _,
            k = inout(reg) kc => _,
            s = in(reg) panel_stride * 8,
            c = inout(reg) c => _,
            cp = inout(reg) c => _,
            ldc = in(reg) ldc * 8,
            out("zmm0") _,
            out("zmm1") _,
            out("zmm2") _,
            out("zmm3") _,
            out("zmm4") _,
            out("zmm5") _,
            out("zmm6") _,
            out("zmm7") _,
            out("zmm8") _,
            out("zmm9") _,
            out("zmm10") _,
            out("zmm11") _,
            out("zmm12") _,
            out("zmm13") _,
            out("zmm14") _,
            out("zmm15") _,
            out("zmm16") _,
            out("zmm17") _,
            out("zmm18") _,
            out("zmm19") _,
            out("zmm20") _,
            out("zmm21") _,
            out("zmm22") _,
            out("zmm23") _,
            out("zmm24") _,
            out("zmm25") _,
            out("zmm26") _,
            out("zmm27") _,
            out("zmm28") _,
            options(nostack),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn strips(kc: usize, panel_stride: usize) -> (Vec<f64>, Vec<f64>) {
        let a = (0..2 * panel_stride + kc * PANEL_ROWS)
            .map(|i| ((i * 37) % 101) as f64 / 50.0 - 1.0)
            .collect();
        let b = (0..kc * PANEL_ROWS)
            .map(|i| ((i * 53) % 97) as f64 / 40.0 - 1.2)
            .collect();
        (a, b)
    }

    /// The reference against the sum written out by hand for one entry.
    #[test]
    fn reference_kernel_is_the_strip_product() {
        let (kc, stride) = (3, 40);
        let (a, b) = strips(kc, stride);
        let mut out = [0.0; MICRO_OUT];
        micro_reference(kc, &a, stride, &b, &mut out);
        // row i = 13 (panel 1, row 5), column j = 6
        let expected: f64 = (0..kc).map(|p| a[stride + p * 8 + 5] * b[p * 8 + 6]).sum();
        assert_eq!(out[6 * 24 + 13], expected);
    }

    #[cfg(target_arch = "x86_64")]
    #[test]
    fn avx512_kernel_matches_the_reference() {
        if !crate::sht::KernelPath::Avx512.is_supported() {
            return; // nothing to compare on this CPU
        }
        for &(kc, stride) in &[(1, 8), (2, 16), (7, 64), (256, 2048), (300, 2500)] {
            let (a, b) = strips(kc, stride);
            let (mut fast, mut reference) = ([0.0; MICRO_OUT], [0.0; MICRO_OUT]);
            // SAFETY: AVX-512F checked above.
            #[allow(unsafe_code)]
            unsafe {
                micro_avx512(kc, &a, stride, &b, &mut fast)
            };
            micro_reference(kc, &a, stride, &b, &mut reference);
            let scale = reference
                .iter()
                .fold(0.0f64, |m, v| m.max(v.abs()))
                .max(1.0);
            for (n, (f, r)) in fast.iter().zip(&reference).enumerate() {
                assert!(
                    (f - r).abs() <= 1e-13 * scale * kc as f64,
                    "kc {kc} out[{n}]: {f} vs {r}"
                );
            }
            // the fused copy adds into a 24 × 8 block of a column-major C, columns 31 apart
            let ldc = 31;
            let mut c: Vec<f64> = (0..ldc * 8).map(|i| i as f64 * 0.25).collect();
            let before = c.clone();
            // SAFETY: AVX-512F checked above; c holds 8 columns of ldc ≥ 24 values.
            #[allow(unsafe_code)]
            unsafe {
                micro_avx512_add(kc, &a, stride, &b, c.as_mut_ptr(), ldc)
            };
            for j in 0..8 {
                for i in 0..ldc {
                    let expected =
                        before[j * ldc + i] + if i < 24 { reference[j * 24 + i] } else { 0.0 };
                    let got = c[j * ldc + i];
                    assert!(
                        (got - expected).abs() <= 1e-13 * scale * kc as f64,
                        "kc {kc} C[{i},{j}]: {got} vs {expected}"
                    );
                }
            }
        }
    }
}
