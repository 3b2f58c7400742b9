;; The per-bin kernels of the GCC analysis in WebAssembly with 128-bit SIMD (f64x2, f32x4), assembled
;; at build time (npm run build: src/dsp/gcc-kernels-assemble.ts, wabt) into
;; dist/dsp/gcc-kernels.wasm and driven from src/dsp/gcc-kernels.ts.
;;
;; Each f64x2 lane does exactly the double-precision arithmetic of the JavaScript kernel it
;; stands for (src/dsp/gcc.ts, src/dsp/gcc-lanes.ts, src/analysis/hop-analyzer.ts), operation
;; for operation and in the same order; WebAssembly has no fused multiply-add and its f64
;; arithmetic is IEEE 754 binary64 with round-to-nearest, as JavaScript's. So the results are
;; bit-identical to the JavaScript kernels'. The band scores run in float32 (f32x4, four lanes):
;; their JavaScript twin rounds every operation with Math.fround, which gives IEEE binary32
;; results exactly (a double holds a binary32 sum or product before its one rounding), so they
;; too are bit-identical. Cosines and sines are computed by the caller
;; (Math.cos, Math.sin) and passed in through the scratch area `ph`.
;;
;; Arguments are byte offsets into the module's memory. Spectra are interleaved float32
;; (re, im per bin, PFFFT's layout), everything else float64; band ends are int32.
(module
  (memory (export "memory") 1)

  ;; For bins [k0, k1) of a spectrum (interleaved float32), four bins per step: power[k] += r*r + i*i
  ;; (double precision) and inv[k] = p2 > 1e-30 ? f32(1 / f32(sqrt(f32(p2)))) : 0 (1 / |X| in
  ;; float32, stored as a double); with $ut (not 0) also the unit spectrum of channel c,
  ;; ut[k * stride + 4 c] = f32(r * inv[k]) and at + half its imaginary part (byte offsets of
  ;; UnitLayout, src/dsp/gcc-lanes.ts). The last one to three bins one at a time, with the same operations.
  (func (export "magnitudes") (param $spec i32) (param $power i32) (param $inv i32) (param $k0 i32) (param $k1 i32)
    (param $ut i32) (param $c i32) (param $stride i32) (param $half i32)
    (local $k i32) (local $v0 v128) (local $v1 v128) (local $rf v128) (local $if v128) (local $lo v128) (local $hi v128)
    (local $r v128) (local $i v128) (local $m v128) (local $g v128) (local $ur v128) (local $ui v128) (local $a i32) (local $at i32)
    (local $sr f32) (local $si f32) (local $s2 f64) (local $sg f32)
    (local.set $k (local.get $k0))
    (block $done
      (loop $four
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 4)) (local.get $k1)))
        (local.set $v0 (v128.load (i32.add (local.get $spec) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $v1 (v128.load offset=16 (i32.add (local.get $spec) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $rf (i8x16.shuffle 0 1 2 3 8 9 10 11 16 17 18 19 24 25 26 27 (local.get $v0) (local.get $v1)))
        (local.set $if (i8x16.shuffle 4 5 6 7 12 13 14 15 20 21 22 23 28 29 30 31 (local.get $v0) (local.get $v1)))
        ;; bins k, k + 1
        (local.set $r (f64x2.promote_low_f32x4 (local.get $rf)))
        (local.set $i (f64x2.promote_low_f32x4 (local.get $if)))
        (local.set $lo (f64x2.add (f64x2.mul (local.get $r) (local.get $r)) (f64x2.mul (local.get $i) (local.get $i))))
        ;; bins k + 2, k + 3
        (local.set $r (f64x2.promote_low_f32x4 (i8x16.shuffle 8 9 10 11 12 13 14 15 8 9 10 11 12 13 14 15 (local.get $rf) (local.get $rf))))
        (local.set $i (f64x2.promote_low_f32x4 (i8x16.shuffle 8 9 10 11 12 13 14 15 8 9 10 11 12 13 14 15 (local.get $if) (local.get $if))))
        (local.set $hi (f64x2.add (f64x2.mul (local.get $r) (local.get $r)) (f64x2.mul (local.get $i) (local.get $i))))
        (local.set $a (i32.add (local.get $power) (i32.shl (local.get $k) (i32.const 3))))
        (v128.store (local.get $a) (f64x2.add (v128.load (local.get $a)) (local.get $lo)))
        (v128.store offset=16 (local.get $a) (f64x2.add (v128.load offset=16 (local.get $a)) (local.get $hi)))
        ;; 1 / |X| in float32, 0 where p2 is not above 1e-30 (the test in double precision)
        (local.set $m (i8x16.shuffle 0 1 2 3 8 9 10 11 16 17 18 19 24 25 26 27
          (f64x2.gt (local.get $lo) (f64x2.splat (f64.const 1e-30)))
          (f64x2.gt (local.get $hi) (f64x2.splat (f64.const 1e-30)))))
        (local.set $g (v128.and (local.get $m)
          (f32x4.div (f32x4.splat (f32.const 1))
            (f32x4.sqrt (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
              (f32x4.demote_f64x2_zero (local.get $lo)) (f32x4.demote_f64x2_zero (local.get $hi)))))))
        (local.set $a (i32.add (local.get $inv) (i32.shl (local.get $k) (i32.const 3))))
        (v128.store (local.get $a) (f64x2.promote_low_f32x4 (local.get $g)))
        (v128.store offset=16 (local.get $a) (f64x2.promote_low_f32x4 (i8x16.shuffle 8 9 10 11 12 13 14 15 8 9 10 11 12 13 14 15 (local.get $g) (local.get $g))))
        (if (local.get $ut)
          (then
            (local.set $ur (f32x4.mul (local.get $rf) (local.get $g)))
            (local.set $ui (f32x4.mul (local.get $if) (local.get $g)))
            (local.set $at (i32.add (i32.add (local.get $ut) (i32.mul (local.get $k) (local.get $stride))) (i32.shl (local.get $c) (i32.const 2))))
            (f32.store (local.get $at) (f32x4.extract_lane 0 (local.get $ur)))
            (f32.store (i32.add (local.get $at) (local.get $half)) (f32x4.extract_lane 0 (local.get $ui)))
            (local.set $at (i32.add (local.get $at) (local.get $stride)))
            (f32.store (local.get $at) (f32x4.extract_lane 1 (local.get $ur)))
            (f32.store (i32.add (local.get $at) (local.get $half)) (f32x4.extract_lane 1 (local.get $ui)))
            (local.set $at (i32.add (local.get $at) (local.get $stride)))
            (f32.store (local.get $at) (f32x4.extract_lane 2 (local.get $ur)))
            (f32.store (i32.add (local.get $at) (local.get $half)) (f32x4.extract_lane 2 (local.get $ui)))
            (local.set $at (i32.add (local.get $at) (local.get $stride)))
            (f32.store (local.get $at) (f32x4.extract_lane 3 (local.get $ur)))
            (f32.store (i32.add (local.get $at) (local.get $half)) (f32x4.extract_lane 3 (local.get $ui)))))
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br $four)))
    (block $tailDone
      (loop $tail
        (br_if $tailDone (i32.ge_s (local.get $k) (local.get $k1)))
        (local.set $sr (f32.load (i32.add (local.get $spec) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $si (f32.load offset=4 (i32.add (local.get $spec) (i32.shl (local.get $k) (i32.const 3)))))
        (local.set $s2 (f64.add (f64.mul (f64.promote_f32 (local.get $sr)) (f64.promote_f32 (local.get $sr)))
          (f64.mul (f64.promote_f32 (local.get $si)) (f64.promote_f32 (local.get $si)))))
        (local.set $a (i32.add (local.get $power) (i32.shl (local.get $k) (i32.const 3))))
        (f64.store (local.get $a) (f64.add (f64.load (local.get $a)) (local.get $s2)))
        (local.set $sg (select (f32.div (f32.const 1) (f32.sqrt (f32.demote_f64 (local.get $s2)))) (f32.const 0) (f64.gt (local.get $s2) (f64.const 1e-30))))
        (f64.store (i32.add (local.get $inv) (i32.shl (local.get $k) (i32.const 3))) (f64.promote_f32 (local.get $sg)))
        (if (local.get $ut)
          (then
            (local.set $at (i32.add (i32.add (local.get $ut) (i32.mul (local.get $k) (local.get $stride))) (i32.shl (local.get $c) (i32.const 2))))
            (f32.store (local.get $at) (f32.mul (local.get $sr) (local.get $sg)))
            (f32.store (i32.add (local.get $at) (local.get $half)) (f32.mul (local.get $si) (local.get $sg)))))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $tail))))

  ;; out[k] = w[k] * inv[k] for bins [k0, k1).
  (func (export "times") (param $w i32) (param $inv i32) (param $out i32) (param $k0 i32) (param $k1 i32)
    (local $k i32) (local $o i32)
    (local.set $k (local.get $k0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $k1)))
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (v128.store (i32.add (local.get $out) (local.get $o))
          (f64x2.mul (v128.load (i32.add (local.get $w) (local.get $o))) (v128.load (i32.add (local.get $inv) (local.get $o)))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $k) (local.get $k1))
      (then
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (f64.store (i32.add (local.get $out) (local.get $o))
          (f64.mul (f64.load (i32.add (local.get $w) (local.get $o))) (f64.load (i32.add (local.get $inv) (local.get $o))))))))

  ;; Each of the P cross-spectra whose (re, im) addresses stand in acc[2p], acc[2p + 1] (int32)
  ;; has its bins list[0 .. n) (int32) scaled by r (HopAnalyzer.forgetQuietBins).
  (func (export "scale_listed") (param $acc i32) (param $P i32) (param $list i32) (param $n i32) (param $r f64)
    (local $p i32) (local $i i32) (local $re i32) (local $im i32) (local $o i32)
    (local.set $p (i32.const 0))
    (block $pd
      (loop $pl
        (br_if $pd (i32.ge_s (local.get $p) (local.get $P)))
        (local.set $re (i32.load (i32.add (local.get $acc) (i32.shl (local.get $p) (i32.const 3)))))
        (local.set $im (i32.load offset=4 (i32.add (local.get $acc) (i32.shl (local.get $p) (i32.const 3)))))
        (local.set $i (i32.const 0))
        (block $d
          (loop $l
            (br_if $d (i32.ge_s (local.get $i) (local.get $n)))
            (local.set $o (i32.shl (i32.load (i32.add (local.get $list) (i32.shl (local.get $i) (i32.const 2)))) (i32.const 3)))
            (f64.store (i32.add (local.get $re) (local.get $o)) (f64.mul (f64.load (i32.add (local.get $re) (local.get $o))) (local.get $r)))
            (f64.store (i32.add (local.get $im) (local.get $o)) (f64.mul (f64.load (i32.add (local.get $im) (local.get $o))) (local.get $r)))
            (local.set $i (i32.add (local.get $i) (i32.const 1)))
            (br $l)))
        (local.set $p (i32.add (local.get $p) (i32.const 1)))
        (br $pl))))

  ;; The inverse FFT's input (RealFft.inverseLags, src/dsp/fft.ts): dst[2k] = re[k] * g[k] and
  ;; dst[2k + 1] = im[k] * g[k] rounded to float32 (g = 0: no scaling), for bins [k0, k1).
  (func (export "scale_pack") (param $re i32) (param $im i32) (param $g i32) (param $dst i32) (param $k0 i32) (param $k1 i32)
    (local $k i32) (local $o i32) (local $r v128) (local $i v128) (local $sr f64) (local $si f64)
    (local.set $k (local.get $k0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $k1)))
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $r (v128.load (i32.add (local.get $re) (local.get $o))))
        (local.set $i (v128.load (i32.add (local.get $im) (local.get $o))))
        (if (local.get $g)
          (then
            (local.set $r (f64x2.mul (local.get $r) (v128.load (i32.add (local.get $g) (local.get $o)))))
            (local.set $i (f64x2.mul (local.get $i) (v128.load (i32.add (local.get $g) (local.get $o)))))))
        (v128.store (i32.add (local.get $dst) (local.get $o))
          (i8x16.shuffle 0 1 2 3 16 17 18 19 4 5 6 7 20 21 22 23
            (f32x4.demote_f64x2_zero (local.get $r)) (f32x4.demote_f64x2_zero (local.get $i))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $k) (local.get $k1))
      (then
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $sr (f64.load (i32.add (local.get $re) (local.get $o))))
        (local.set $si (f64.load (i32.add (local.get $im) (local.get $o))))
        (if (local.get $g)
          (then
            (local.set $sr (f64.mul (local.get $sr) (f64.load (i32.add (local.get $g) (local.get $o)))))
            (local.set $si (f64.mul (local.get $si) (f64.load (i32.add (local.get $g) (local.get $o)))))))
        (f32.store (i32.add (local.get $dst) (local.get $o)) (f32.demote_f64 (local.get $sr)))
        (f32.store offset=4 (i32.add (local.get $dst) (local.get $o)) (f32.demote_f64 (local.get $si))))))

  ;; Steered response (SrpDirectionModel.powerAt, src/direction/srp-search.ts) at `count` grid
  ;; points listed in pts (int32), two points per step: power[g] = sum over the P pairs, in order, of
  ;; y0 + frac * (t[j + 1] - y0) with j = idx[g P + p], y0 = t[j], frac = frac[g P + p]; and
  ;; stamp[g] = hop (int32).
  (func (export "srp_power") (param $t i32) (param $idx i32) (param $frac i32) (param $P i32) (param $pts i32) (param $count i32)
    (param $power i32) (param $stamp i32) (param $hop i32)
    (local $i i32) (local $g0 i32) (local $g1 i32) (local $o0 i32) (local $o1 i32) (local $p i32) (local $j0 i32) (local $j1 i32)
    (local $s v128) (local $y0 v128) (local $y1 v128) (local $f v128) (local $ss f64) (local $sy f64)
    (local.set $i (i32.const 0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $i) (i32.const 2)) (local.get $count)))
        (local.set $g0 (i32.load (i32.add (local.get $pts) (i32.shl (local.get $i) (i32.const 2)))))
        (local.set $g1 (i32.load offset=4 (i32.add (local.get $pts) (i32.shl (local.get $i) (i32.const 2)))))
        (local.set $o0 (i32.mul (local.get $g0) (local.get $P)))
        (local.set $o1 (i32.mul (local.get $g1) (local.get $P)))
        (local.set $s (v128.const i64x2 0 0))
        (local.set $p (i32.const 0))
        (block $pd
          (loop $pl
            (br_if $pd (i32.ge_s (local.get $p) (local.get $P)))
            (local.set $j0 (i32.add (local.get $t) (i32.shl (i32.load (i32.add (local.get $idx) (i32.shl (i32.add (local.get $o0) (local.get $p)) (i32.const 2)))) (i32.const 3))))
            (local.set $j1 (i32.add (local.get $t) (i32.shl (i32.load (i32.add (local.get $idx) (i32.shl (i32.add (local.get $o1) (local.get $p)) (i32.const 2)))) (i32.const 3))))
            (local.set $y0 (f64x2.replace_lane 1 (v128.load64_splat (local.get $j0)) (f64.load (local.get $j1))))
            (local.set $y1 (f64x2.replace_lane 1 (v128.load64_splat offset=8 (local.get $j0)) (f64.load offset=8 (local.get $j1))))
            (local.set $f (f64x2.replace_lane 1
              (v128.load64_splat (i32.add (local.get $frac) (i32.shl (i32.add (local.get $o0) (local.get $p)) (i32.const 3))))
              (f64.load (i32.add (local.get $frac) (i32.shl (i32.add (local.get $o1) (local.get $p)) (i32.const 3))))))
            (local.set $s (f64x2.add (local.get $s) (f64x2.add (local.get $y0) (f64x2.mul (local.get $f) (f64x2.sub (local.get $y1) (local.get $y0))))))
            (local.set $p (i32.add (local.get $p) (i32.const 1)))
            (br $pl)))
        (f64.store (i32.add (local.get $power) (i32.shl (local.get $g0) (i32.const 3))) (f64x2.extract_lane 0 (local.get $s)))
        (f64.store (i32.add (local.get $power) (i32.shl (local.get $g1) (i32.const 3))) (f64x2.extract_lane 1 (local.get $s)))
        (i32.store (i32.add (local.get $stamp) (i32.shl (local.get $g0) (i32.const 2))) (local.get $hop))
        (i32.store (i32.add (local.get $stamp) (i32.shl (local.get $g1) (i32.const 2))) (local.get $hop))
        (local.set $i (i32.add (local.get $i) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $i) (local.get $count))
      (then
        (local.set $g0 (i32.load (i32.add (local.get $pts) (i32.shl (local.get $i) (i32.const 2)))))
        (local.set $o0 (i32.mul (local.get $g0) (local.get $P)))
        (local.set $ss (f64.const 0))
        (local.set $p (i32.const 0))
        (block $pd
          (loop $pl
            (br_if $pd (i32.ge_s (local.get $p) (local.get $P)))
            (local.set $j0 (i32.add (local.get $t) (i32.shl (i32.load (i32.add (local.get $idx) (i32.shl (i32.add (local.get $o0) (local.get $p)) (i32.const 2)))) (i32.const 3))))
            (local.set $sy (f64.load (local.get $j0)))
            (local.set $ss (f64.add (local.get $ss) (f64.add (local.get $sy)
              (f64.mul (f64.load (i32.add (local.get $frac) (i32.shl (i32.add (local.get $o0) (local.get $p)) (i32.const 3))))
                (f64.sub (f64.load offset=8 (local.get $j0)) (local.get $sy))))))
            (local.set $p (i32.add (local.get $p) (i32.const 1)))
            (br $pl)))
        (f64.store (i32.add (local.get $power) (i32.shl (local.get $g0) (i32.const 3))) (local.get $ss))
        (i32.store (i32.add (local.get $stamp) (i32.shl (local.get $g0) (i32.const 2))) (local.get $hop)))))

  ;; The steered response at one grid point g, as srp_power (scalar), stored with its stamp;
  ;; returns it. A point already stamped with this hop is read, not recomputed.
  (func $srp_at (param $t i32) (param $idx i32) (param $frac i32) (param $P i32) (param $g i32)
    (param $power i32) (param $stamp i32) (param $hop i32) (result f64)
    (local $o i32) (local $p i32) (local $j i32) (local $s f64) (local $y f64)
    (if (i32.eq (i32.load (i32.add (local.get $stamp) (i32.shl (local.get $g) (i32.const 2)))) (local.get $hop))
      (then (return (f64.load (i32.add (local.get $power) (i32.shl (local.get $g) (i32.const 3)))))))
    (local.set $o (i32.mul (local.get $g) (local.get $P)))
    (local.set $s (f64.const 0))
    (local.set $p (i32.const 0))
    (block $pd
      (loop $pl
        (br_if $pd (i32.ge_s (local.get $p) (local.get $P)))
        (local.set $j (i32.add (local.get $t) (i32.shl (i32.load (i32.add (local.get $idx) (i32.shl (i32.add (local.get $o) (local.get $p)) (i32.const 2)))) (i32.const 3))))
        (local.set $y (f64.load (local.get $j)))
        (local.set $s (f64.add (local.get $s) (f64.add (local.get $y)
          (f64.mul (f64.load (i32.add (local.get $frac) (i32.shl (i32.add (local.get $o) (local.get $p)) (i32.const 3))))
            (f64.sub (f64.load offset=8 (local.get $j)) (local.get $y))))))
        (local.set $p (i32.add (local.get $p) (i32.const 1)))
        (br $pl)))
    (f64.store (i32.add (local.get $power) (i32.shl (local.get $g) (i32.const 3))) (local.get $s))
    (i32.store (i32.add (local.get $stamp) (i32.shl (local.get $g) (i32.const 2))) (local.get $hop))
    (local.get $s))

  ;; The rest of SrpDirectionModel.findCandidates after the coarse pass (srp_power over the coarse
  ;; points), as its JavaScript: the coarse local maxima (neighbour lists cnbStart/cnbList over
  ;; the coarse points; ties go to the lower index), best first, at most `want` of them (starts,
  ;; startPw: scratch); from each a climb on the fine grid (nbStart/nbList) to the fine local
  ;; maximum, 64 steps at most; distinct end points, best first, at most maxCount, into
  ;; found (int32) and scores (f64). Returns how many were found. `a` points to the int32 argument
  ;; block [t idx frac P power stamp hop coarse C cnbStart cnbList nbStart nbList want starts startPw found scores maxCount].
  (func (export "srp_search") (param $a i32) (result i32)
    (local $t i32) (local $idx i32) (local $frac i32) (local $P i32) (local $power i32) (local $stamp i32) (local $hop i32)
    (local $coarse i32) (local $C i32) (local $cnbStart i32) (local $cnbList i32) (local $nbStart i32) (local $nbList i32)
    (local $want i32) (local $starts i32) (local $startPw i32) (local $found i32) (local $scores i32) (local $maxCount i32)
    (local $i i32) (local $g i32) (local $k i32) (local $j i32) (local $e i32) (local $pos i32) (local $n i32) (local $nf i32)
    (local $isMax i32) (local $step i32) (local $best i32) (local $dup i32) (local $f i32)
    (local $v f64) (local $w f64) (local $bestV f64)
    (local.set $t (i32.load (local.get $a)))
    (local.set $idx (i32.load offset=4 (local.get $a)))
    (local.set $frac (i32.load offset=8 (local.get $a)))
    (local.set $P (i32.load offset=12 (local.get $a)))
    (local.set $power (i32.load offset=16 (local.get $a)))
    (local.set $stamp (i32.load offset=20 (local.get $a)))
    (local.set $hop (i32.load offset=24 (local.get $a)))
    (local.set $coarse (i32.load offset=28 (local.get $a)))
    (local.set $C (i32.load offset=32 (local.get $a)))
    (local.set $cnbStart (i32.load offset=36 (local.get $a)))
    (local.set $cnbList (i32.load offset=40 (local.get $a)))
    (local.set $nbStart (i32.load offset=44 (local.get $a)))
    (local.set $nbList (i32.load offset=48 (local.get $a)))
    (local.set $want (i32.load offset=52 (local.get $a)))
    (local.set $starts (i32.load offset=56 (local.get $a)))
    (local.set $startPw (i32.load offset=60 (local.get $a)))
    (local.set $found (i32.load offset=64 (local.get $a)))
    (local.set $scores (i32.load offset=68 (local.get $a)))
    (local.set $maxCount (i32.load offset=72 (local.get $a)))
    ;; coarse local maxima
    (local.set $n (i32.const 0))
    (local.set $i (i32.const 0))
    (block $cd
      (loop $cl
        (br_if $cd (i32.ge_s (local.get $i) (local.get $C)))
        (block $next
          (local.set $g (i32.load (i32.add (local.get $coarse) (i32.shl (local.get $i) (i32.const 2)))))
          (local.set $v (f64.load (i32.add (local.get $power) (i32.shl (local.get $g) (i32.const 3)))))
          (br_if $next (i32.and (i32.eq (local.get $n) (local.get $want))
            (f64.le (local.get $v) (f64.load (i32.add (local.get $startPw) (i32.shl (i32.sub (local.get $n) (i32.const 1)) (i32.const 3)))))))
          (local.set $j (i32.load (i32.add (local.get $cnbStart) (i32.shl (local.get $i) (i32.const 2)))))
          (local.set $e (i32.load offset=4 (i32.add (local.get $cnbStart) (i32.shl (local.get $i) (i32.const 2)))))
          (block $nd
            (loop $nl
              (br_if $nd (i32.ge_s (local.get $j) (local.get $e)))
              (local.set $k (i32.load (i32.add (local.get $coarse) (i32.shl (i32.load (i32.add (local.get $cnbList) (i32.shl (local.get $j) (i32.const 2)))) (i32.const 2)))))
              (local.set $w (f64.load (i32.add (local.get $power) (i32.shl (local.get $k) (i32.const 3)))))
              (br_if $next (f64.gt (local.get $w) (local.get $v)))
              (br_if $next (i32.and (f64.eq (local.get $w) (local.get $v)) (i32.lt_s (local.get $k) (local.get $g))))
              (local.set $j (i32.add (local.get $j) (i32.const 1)))
              (br $nl)))
          (local.set $pos (select (local.get $n) (i32.sub (local.get $want) (i32.const 1)) (i32.lt_s (local.get $n) (local.get $want))))
          (block $sd
            (loop $sl
              (br_if $sd (i32.le_s (local.get $pos) (i32.const 0)))
              (br_if $sd (i32.eqz (f64.lt (f64.load (i32.add (local.get $startPw) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 3)))) (local.get $v))))
              (f64.store (i32.add (local.get $startPw) (i32.shl (local.get $pos) (i32.const 3)))
                (f64.load (i32.add (local.get $startPw) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 3)))))
              (i32.store (i32.add (local.get $starts) (i32.shl (local.get $pos) (i32.const 2)))
                (i32.load (i32.add (local.get $starts) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 2)))))
              (local.set $pos (i32.sub (local.get $pos) (i32.const 1)))
              (br $sl)))
          (f64.store (i32.add (local.get $startPw) (i32.shl (local.get $pos) (i32.const 3))) (local.get $v))
          (i32.store (i32.add (local.get $starts) (i32.shl (local.get $pos) (i32.const 2))) (local.get $g))
          (if (i32.lt_s (local.get $n) (local.get $want)) (then (local.set $n (i32.add (local.get $n) (i32.const 1))))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $cl)))
    ;; climbs
    (local.set $nf (i32.const 0))
    (local.set $i (i32.const 0))
    (block $xd
      (loop $xl
        (br_if $xd (i32.ge_s (local.get $i) (local.get $n)))
        (block $xnext
          (local.set $g (i32.load (i32.add (local.get $starts) (i32.shl (local.get $i) (i32.const 2)))))
          (local.set $v (f64.load (i32.add (local.get $power) (i32.shl (local.get $g) (i32.const 3)))))
          (local.set $step (i32.const 0))
          (block $climbed
            (loop $climb
              (br_if $climbed (i32.ge_s (local.get $step) (i32.const 64)))
              (local.set $best (local.get $g))
              (local.set $bestV (local.get $v))
              (local.set $j (i32.load (i32.add (local.get $nbStart) (i32.shl (local.get $g) (i32.const 2)))))
              (local.set $e (i32.load offset=4 (i32.add (local.get $nbStart) (i32.shl (local.get $g) (i32.const 2)))))
              (block $nd2
                (loop $nl2
                  (br_if $nd2 (i32.ge_s (local.get $j) (local.get $e)))
                  (local.set $k (i32.load (i32.add (local.get $nbList) (i32.shl (local.get $j) (i32.const 2)))))
                  (local.set $w (call $srp_at (local.get $t) (local.get $idx) (local.get $frac) (local.get $P) (local.get $k) (local.get $power) (local.get $stamp) (local.get $hop)))
                  (if (f64.gt (local.get $w) (local.get $bestV))
                    (then (local.set $bestV (local.get $w)) (local.set $best (local.get $k))))
                  (local.set $j (i32.add (local.get $j) (i32.const 1)))
                  (br $nl2)))
              (br_if $climbed (i32.eq (local.get $best) (local.get $g)))
              (local.set $g (local.get $best))
              (local.set $v (local.get $bestV))
              (local.set $step (i32.add (local.get $step) (i32.const 1)))
              (br $climb)))
          ;; a distinct end point?
          (local.set $f (i32.const 0))
          (block $fd
            (loop $fl
              (br_if $fd (i32.ge_s (local.get $f) (local.get $nf)))
              (br_if $xnext (i32.eq (i32.load (i32.add (local.get $found) (i32.shl (local.get $f) (i32.const 2)))) (local.get $g)))
              (local.set $f (i32.add (local.get $f) (i32.const 1)))
              (br $fl)))
          (br_if $xnext (i32.and (i32.eq (local.get $nf) (local.get $maxCount))
            (f64.le (local.get $v) (f64.load (i32.add (local.get $scores) (i32.shl (i32.sub (local.get $nf) (i32.const 1)) (i32.const 3)))))))
          (local.set $pos (select (local.get $nf) (i32.sub (local.get $maxCount) (i32.const 1)) (i32.lt_s (local.get $nf) (local.get $maxCount))))
          (block $sd2
            (loop $sl2
              (br_if $sd2 (i32.le_s (local.get $pos) (i32.const 0)))
              (br_if $sd2 (i32.eqz (f64.lt (f64.load (i32.add (local.get $scores) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 3)))) (local.get $v))))
              (f64.store (i32.add (local.get $scores) (i32.shl (local.get $pos) (i32.const 3)))
                (f64.load (i32.add (local.get $scores) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 3)))))
              (i32.store (i32.add (local.get $found) (i32.shl (local.get $pos) (i32.const 2)))
                (i32.load (i32.add (local.get $found) (i32.shl (i32.sub (local.get $pos) (i32.const 1)) (i32.const 2)))))
              (local.set $pos (i32.sub (local.get $pos) (i32.const 1)))
              (br $sl2)))
          (f64.store (i32.add (local.get $scores) (i32.shl (local.get $pos) (i32.const 3))) (local.get $v))
          (i32.store (i32.add (local.get $found) (i32.shl (local.get $pos) (i32.const 2))) (local.get $g))
          (if (i32.lt_s (local.get $nf) (local.get $maxCount)) (then (local.set $nf (i32.add (local.get $nf) (i32.const 1))))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $xl)))
    (local.get $nf))

  ;; OnsetWeigher.update (src/dsp/onset.ts) after its first hop, two bins per step, the sums (the
  ;; background's for `tiny`, rising and total) added bin by bin in order as the JavaScript does.
  ;; q holds [invRise invPresence floor 1-floor d 1-d floorRise quietAt loudAt heldDecay]. Returns
  ;; the onset strength. With $held (0: none) the same pass finds the bins that sound has left, against
  ;; the noise floor just written: h = held[k] * heldDecay, held[k] = max(power[k], h); out[n] = k and
  ;; n += (power[k] < quietAt * nf[k]) & (h >= loudAt * nf[k]) (each bin's index written, kept in
  ;; order); n is stored at $count. q[10] carries the sum of bg over [k0, k1) as this pass leaves it,
  ;; added bin by bin in order while bg is written (the next call's `tiny` sum: the same numbers in the
  ;; same order as a pass over bg at its start, which it saves), used when q[11] is not 0 (set here, and by
  ;; the caller's first hop, which sets bg itself; the caller clears it when the bins change).
  (func (export "onset_update") (param $power i32) (param $bg i32) (param $nf i32) (param $sm i32) (param $w i32)
    (param $k0 i32) (param $k1 i32) (param $q i32) (param $held i32) (param $out i32) (param $count i32) (result f64)
    (local $a i32) (local $bits i32) (local $cnt i32) (local $nn v128) (local $vh v128) (local $qa v128) (local $la v128) (local $dec v128)
    (local $snn f64) (local $sh f64)
    (local $k i32) (local $o i32) (local $tiny f64) (local $rising f64) (local $total f64) (local $x f64)
    (local $vt v128) (local $invRise v128) (local $invPres v128) (local $floor v128) (local $omf v128) (local $d v128) (local $omd v128) (local $fr v128)
    (local $p v128) (local $b v128) (local $y v128) (local $rise v128) (local $s v128) (local $n v128) (local $z v128) (local $pres v128) (local $rp v128)
    (local $one v128) (local $half v128) (local $nb v128) (local $next f64)
    (local $sp f64) (local $sb f64) (local $sy f64) (local $srise f64) (local $ss f64) (local $sn f64) (local $sz f64) (local $spres f64)
    ;; tiny = (sum of bg over the bins / max(1, count)) * 1e-6 + 1e-30
    (if (f64.ne (f64.load offset=88 (local.get $q)) (f64.const 0))
      (then (local.set $tiny (f64.load offset=80 (local.get $q))))
      (else
        (local.set $tiny (f64.const 0))
        (local.set $k (local.get $k0))
        (block $td
          (loop $tl
            (br_if $td (i32.ge_s (local.get $k) (local.get $k1)))
            (local.set $tiny (f64.add (local.get $tiny) (f64.load (i32.add (local.get $bg) (i32.shl (local.get $k) (i32.const 3))))))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))
            (br $tl)))))
    (local.set $next (f64.const 0))
    (local.set $tiny (f64.add (f64.mul (f64.div (local.get $tiny)
      (f64.convert_i32_s (select (i32.sub (local.get $k1) (local.get $k0)) (i32.const 1) (i32.gt_s (i32.sub (local.get $k1) (local.get $k0)) (i32.const 1)))))
      (f64.const 1e-6)) (f64.const 1e-30)))
    (local.set $vt (f64x2.splat (local.get $tiny)))
    (local.set $invRise (v128.load64_splat (local.get $q)))
    (local.set $invPres (v128.load64_splat offset=8 (local.get $q)))
    (local.set $floor (v128.load64_splat offset=16 (local.get $q)))
    (local.set $omf (v128.load64_splat offset=24 (local.get $q)))
    (local.set $d (v128.load64_splat offset=32 (local.get $q)))
    (local.set $omd (v128.load64_splat offset=40 (local.get $q)))
    (local.set $fr (v128.load64_splat offset=48 (local.get $q)))
    (local.set $qa (v128.load64_splat offset=56 (local.get $q)))
    (local.set $la (v128.load64_splat offset=64 (local.get $q)))
    (local.set $dec (v128.load64_splat offset=72 (local.get $q)))
    (local.set $cnt (i32.const 0))
    (local.set $one (f64x2.splat (f64.const 1)))
    (local.set $half (f64x2.splat (f64.const 0.5)))
    (local.set $rising (f64.const 0))
    (local.set $total (f64.const 0))
    (local.set $k (local.get $k0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $k1)))
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $p (v128.load (i32.add (local.get $power) (local.get $o))))
        (local.set $b (v128.load (i32.add (local.get $bg) (local.get $o))))
        ;; rise = clamp((y + |y|) * 0.5, .., 1), y = (p / (bg + tiny) - 1) * invRise
        (local.set $y (f64x2.mul (f64x2.sub (f64x2.div (local.get $p) (f64x2.add (local.get $b) (local.get $vt))) (local.get $one)) (local.get $invRise)))
        (local.set $rise (f64x2.mul (f64x2.add (local.get $y) (f64x2.abs (local.get $y))) (local.get $half)))
        (local.set $rise (v128.bitselect (local.get $one) (local.get $rise) (f64x2.gt (local.get $rise) (local.get $one))))
        ;; s = sm = 0.5 sm + 0.5 p
        (local.set $s (f64x2.add (f64x2.mul (local.get $half) (v128.load (i32.add (local.get $sm) (local.get $o)))) (f64x2.mul (local.get $half) (local.get $p))))
        (v128.store (i32.add (local.get $sm) (local.get $o)) (local.get $s))
        (local.set $n (v128.load (i32.add (local.get $nf) (local.get $o))))
        ;; presence = clamp((z + |z|) * 0.5, .., 1), z = (s / (2.5 n + tiny) - 1) * invPresence
        (local.set $z (f64x2.mul (f64x2.sub (f64x2.div (local.get $s) (f64x2.add (f64x2.mul (f64x2.splat (f64.const 2.5)) (local.get $n)) (local.get $vt))) (local.get $one)) (local.get $invPres)))
        (local.set $pres (f64x2.mul (f64x2.add (local.get $z) (f64x2.abs (local.get $z))) (local.get $half)))
        (local.set $pres (v128.bitselect (local.get $one) (local.get $pres) (f64x2.gt (local.get $pres) (local.get $one))))
        ;; nf = s < n ? s : n * floorRise
        (local.set $nn (v128.bitselect (local.get $s) (f64x2.mul (local.get $n) (local.get $fr)) (f64x2.lt (local.get $s) (local.get $n))))
        (v128.store (i32.add (local.get $nf) (local.get $o)) (local.get $nn))
        (if (local.get $held)
          (then
            ;; the quiet search: the lanes' tests as two bits
            (local.set $a (i32.add (local.get $held) (local.get $o)))
            (local.set $vh (f64x2.mul (v128.load (local.get $a)) (local.get $dec)))
            (v128.store (local.get $a) (f64x2.max (local.get $p) (local.get $vh)))
            (local.set $bits (i64x2.bitmask (v128.and
              (f64x2.lt (local.get $p) (f64x2.mul (local.get $qa) (local.get $nn)))
              (f64x2.ge (local.get $vh) (f64x2.mul (local.get $la) (local.get $nn))))))
            (i32.store (i32.add (local.get $out) (i32.shl (local.get $cnt) (i32.const 2))) (local.get $k))
            (local.set $cnt (i32.add (local.get $cnt) (i32.and (local.get $bits) (i32.const 1))))
            (i32.store (i32.add (local.get $out) (i32.shl (local.get $cnt) (i32.const 2))) (i32.add (local.get $k) (i32.const 1)))
            (local.set $cnt (i32.add (local.get $cnt) (i32.shr_u (local.get $bits) (i32.const 1))))))
        (v128.store (i32.add (local.get $w) (local.get $o))
          (f64x2.mul (f64x2.add (local.get $floor) (f64x2.mul (local.get $omf) (local.get $rise))) (local.get $pres)))
        (local.set $rp (f64x2.mul (local.get $rise) (local.get $p)))
        (local.set $rising (f64.add (f64.add (local.get $rising) (f64x2.extract_lane 0 (local.get $rp))) (f64x2.extract_lane 1 (local.get $rp))))
        (local.set $total (f64.add (f64.add (local.get $total) (f64x2.extract_lane 0 (local.get $p))) (f64x2.extract_lane 1 (local.get $p))))
        (local.set $nb (f64x2.add (f64x2.mul (local.get $d) (local.get $b)) (f64x2.mul (local.get $omd) (local.get $p))))
        (v128.store (i32.add (local.get $bg) (local.get $o)) (local.get $nb))
        (local.set $next (f64.add (f64.add (local.get $next) (f64x2.extract_lane 0 (local.get $nb))) (f64x2.extract_lane 1 (local.get $nb))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $k) (local.get $k1))
      (then
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $sp (f64.load (i32.add (local.get $power) (local.get $o))))
        (local.set $sb (f64.load (i32.add (local.get $bg) (local.get $o))))
        (local.set $sy (f64.mul (f64.sub (f64.div (local.get $sp) (f64.add (local.get $sb) (local.get $tiny))) (f64.const 1)) (f64.load (local.get $q))))
        (local.set $srise (f64.mul (f64.add (local.get $sy) (f64.abs (local.get $sy))) (f64.const 0.5)))
        (if (f64.gt (local.get $srise) (f64.const 1)) (then (local.set $srise (f64.const 1))))
        (local.set $ss (f64.add (f64.mul (f64.const 0.5) (f64.load (i32.add (local.get $sm) (local.get $o)))) (f64.mul (f64.const 0.5) (local.get $sp))))
        (f64.store (i32.add (local.get $sm) (local.get $o)) (local.get $ss))
        (local.set $sn (f64.load (i32.add (local.get $nf) (local.get $o))))
        (local.set $sz (f64.mul (f64.sub (f64.div (local.get $ss) (f64.add (f64.mul (f64.const 2.5) (local.get $sn)) (local.get $tiny))) (f64.const 1)) (f64.load offset=8 (local.get $q))))
        (local.set $spres (f64.mul (f64.add (local.get $sz) (f64.abs (local.get $sz))) (f64.const 0.5)))
        (if (f64.gt (local.get $spres) (f64.const 1)) (then (local.set $spres (f64.const 1))))
        (local.set $snn (select (local.get $ss) (f64.mul (local.get $sn) (f64.load offset=48 (local.get $q))) (f64.lt (local.get $ss) (local.get $sn))))
        (f64.store (i32.add (local.get $nf) (local.get $o)) (local.get $snn))
        (if (local.get $held)
          (then
            (local.set $a (i32.add (local.get $held) (local.get $o)))
            (local.set $sh (f64.mul (f64.load (local.get $a)) (f64.load offset=72 (local.get $q))))
            (f64.store (local.get $a) (f64.max (local.get $sp) (local.get $sh)))
            (i32.store (i32.add (local.get $out) (i32.shl (local.get $cnt) (i32.const 2))) (local.get $k))
            (local.set $cnt (i32.add (local.get $cnt)
              (i32.and (f64.lt (local.get $sp) (f64.mul (f64.load offset=56 (local.get $q)) (local.get $snn)))
                       (f64.ge (local.get $sh) (f64.mul (f64.load offset=64 (local.get $q)) (local.get $snn))))))))
        (f64.store (i32.add (local.get $w) (local.get $o))
          (f64.mul (f64.add (f64.load offset=16 (local.get $q)) (f64.mul (f64.load offset=24 (local.get $q)) (local.get $srise))) (local.get $spres)))
        (local.set $rising (f64.add (local.get $rising) (f64.mul (local.get $srise) (local.get $sp))))
        (local.set $total (f64.add (local.get $total) (local.get $sp)))
        (local.set $sb (f64.add (f64.mul (f64.load offset=32 (local.get $q)) (local.get $sb)) (f64.mul (f64.load offset=40 (local.get $q)) (local.get $sp))))
        (f64.store (i32.add (local.get $bg) (local.get $o)) (local.get $sb))
        (local.set $next (f64.add (local.get $next) (local.get $sb)))))
    (f64.store offset=80 (local.get $q) (local.get $next))
    (f64.store offset=88 (local.get $q) (f64.const 1))
    (if (local.get $held) (then (i32.store (local.get $count) (local.get $cnt))))
    (if (result f64) (f64.gt (local.get $total) (f64.const 0))
      (then (f64.div (local.get $rising) (local.get $total)))
      (else (f64.const 0))))

  ;; The weight stage's sums (HopAnalyzer.weightStage and OnsetWeigher.bandSnrDb): the weight
  ;; memory acc[k] = m * acc[k] + w[k] over [k0, k1) (two bins per step), then per band b (bins
  ;; starts[b] .. ends[b]) the sums of power, of the noise floor nf and of acc, each added bin by bin
  ;; in order, into sp[b], sn[b], sa[b].
  (func (export "band_sums") (param $power i32) (param $nf i32) (param $acc i32) (param $w i32) (param $m f64)
    (param $starts i32) (param $ends i32) (param $nb i32) (param $sp i32) (param $sn i32) (param $sa i32) (param $k0 i32) (param $k1 i32)
    (local $k i32) (local $o i32) (local $b i32) (local $e i32) (local $mv v128) (local $xp f64) (local $xn f64) (local $xa f64)
    (local.set $mv (f64x2.splat (local.get $m)))
    (local.set $k (local.get $k0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $k1)))
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (v128.store (i32.add (local.get $acc) (local.get $o))
          (f64x2.add (f64x2.mul (local.get $mv) (v128.load (i32.add (local.get $acc) (local.get $o)))) (v128.load (i32.add (local.get $w) (local.get $o)))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $k) (local.get $k1))
      (then
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (f64.store (i32.add (local.get $acc) (local.get $o))
          (f64.add (f64.mul (local.get $m) (f64.load (i32.add (local.get $acc) (local.get $o)))) (f64.load (i32.add (local.get $w) (local.get $o)))))))
    (local.set $b (i32.const 0))
    (block $bd
      (loop $bl
        (br_if $bd (i32.ge_s (local.get $b) (local.get $nb)))
        (local.set $k (i32.load (i32.add (local.get $starts) (i32.shl (local.get $b) (i32.const 2)))))
        (local.set $e (i32.load (i32.add (local.get $ends) (i32.shl (local.get $b) (i32.const 2)))))
        (local.set $xp (f64.const 0))
        (local.set $xn (f64.const 0))
        (local.set $xa (f64.const 0))
        (block $kd
          (loop $kl
            (br_if $kd (i32.ge_s (local.get $k) (local.get $e)))
            (local.set $o (i32.shl (local.get $k) (i32.const 3)))
            (local.set $xp (f64.add (local.get $xp) (f64.load (i32.add (local.get $power) (local.get $o)))))
            (local.set $xn (f64.add (local.get $xn) (f64.load (i32.add (local.get $nf) (local.get $o)))))
            (local.set $xa (f64.add (local.get $xa) (f64.load (i32.add (local.get $acc) (local.get $o)))))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))
            (br $kl)))
        (f64.store (i32.add (local.get $sp) (i32.shl (local.get $b) (i32.const 3))) (local.get $xp))
        (f64.store (i32.add (local.get $sn) (i32.shl (local.get $b) (i32.const 3))) (local.get $xn))
        (f64.store (i32.add (local.get $sa) (i32.shl (local.get $b) (i32.const 3))) (local.get $xa))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $bl))))

  ;; windowFrame (src/dsp/window.ts): one frame x (float64, n samples, n a multiple of 4) times the
  ;; window into w (float32); returns its sum of squares: four partial sums (samples i mod 4, lanes
  ;; of two vectors) added as (s0 + s2) + (s1 + s3), the JavaScript's order.
  (func (export "window1") (param $x i32) (param $win i32) (param $w i32) (param $n i32) (result f64)
    (local $o i32) (local $o4 i32) (local $end i32) (local $v0 v128) (local $v1 v128) (local $a v128) (local $b v128)
    (local.set $end (i32.shl (local.get $n) (i32.const 3)))
    (block $d
      (loop $l
        (br_if $d (i32.ge_u (local.get $o) (local.get $end)))
        (local.set $v0 (v128.load (i32.add (local.get $x) (local.get $o))))
        (local.set $v1 (v128.load offset=16 (i32.add (local.get $x) (local.get $o))))
        (local.set $a (f64x2.add (local.get $a) (f64x2.mul (local.get $v0) (local.get $v0))))
        (local.set $b (f64x2.add (local.get $b) (f64x2.mul (local.get $v1) (local.get $v1))))
        (v128.store (i32.add (local.get $w) (local.get $o4))
          (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
            (f32x4.demote_f64x2_zero (f64x2.mul (local.get $v0) (v128.load (i32.add (local.get $win) (local.get $o)))))
            (f32x4.demote_f64x2_zero (f64x2.mul (local.get $v1) (v128.load offset=16 (i32.add (local.get $win) (local.get $o)))))))
        (local.set $o (i32.add (local.get $o) (i32.const 32)))
        (local.set $o4 (i32.add (local.get $o4) (i32.const 16)))
        (br $l)))
    (local.set $a (f64x2.add (local.get $a) (local.get $b)))
    (f64.add (f64x2.extract_lane 0 (local.get $a)) (f64x2.extract_lane 1 (local.get $a))))

  ;; PairCorrelator.accumulate (src/dsp/gcc.ts), two bins per step:
  ;;   g = wA[k] * invB[k]; ar[k] = m * ar[k] + (xr*yr + xi*yi) * g; ai[k] = m * ai[k] + (xr*yi - xi*yr) * g
  (func (export "accumulate") (param $a i32) (param $b i32) (param $wa i32) (param $ib i32) (param $ar i32) (param $ai i32)
    (param $k0 i32) (param $k1 i32) (param $m f64)
    (local $k i32) (local $o i32) (local $va v128) (local $vb v128) (local $xr v128) (local $xi v128) (local $yr v128) (local $yi v128)
    (local $g v128) (local $mv v128) (local $pr i32) (local $pi i32)
    (local $sxr f64) (local $sxi f64) (local $syr f64) (local $syi f64) (local $sg f64)
    (local.set $mv (f64x2.splat (local.get $m)))
    (local.set $k (local.get $k0))
    (block $done
      (loop $two
        (br_if $done (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $k1)))
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $va (v128.load (i32.add (local.get $a) (local.get $o))))
        (local.set $vb (v128.load (i32.add (local.get $b) (local.get $o))))
        (local.set $xr (f64x2.promote_low_f32x4 (i8x16.shuffle 0 1 2 3 8 9 10 11 0 1 2 3 8 9 10 11 (local.get $va) (local.get $va))))
        (local.set $xi (f64x2.promote_low_f32x4 (i8x16.shuffle 4 5 6 7 12 13 14 15 4 5 6 7 12 13 14 15 (local.get $va) (local.get $va))))
        (local.set $yr (f64x2.promote_low_f32x4 (i8x16.shuffle 0 1 2 3 8 9 10 11 0 1 2 3 8 9 10 11 (local.get $vb) (local.get $vb))))
        (local.set $yi (f64x2.promote_low_f32x4 (i8x16.shuffle 4 5 6 7 12 13 14 15 4 5 6 7 12 13 14 15 (local.get $vb) (local.get $vb))))
        (local.set $g (f64x2.mul (v128.load (i32.add (local.get $wa) (local.get $o))) (v128.load (i32.add (local.get $ib) (local.get $o)))))
        (local.set $pr (i32.add (local.get $ar) (local.get $o)))
        (local.set $pi (i32.add (local.get $ai) (local.get $o)))
        (v128.store (local.get $pr)
          (f64x2.add (f64x2.mul (local.get $mv) (v128.load (local.get $pr)))
            (f64x2.mul (f64x2.add (f64x2.mul (local.get $xr) (local.get $yr)) (f64x2.mul (local.get $xi) (local.get $yi))) (local.get $g))))
        (v128.store (local.get $pi)
          (f64x2.add (f64x2.mul (local.get $mv) (v128.load (local.get $pi)))
            (f64x2.mul (f64x2.sub (f64x2.mul (local.get $xr) (local.get $yi)) (f64x2.mul (local.get $xi) (local.get $yr))) (local.get $g))))
        (local.set $k (i32.add (local.get $k) (i32.const 2)))
        (br $two)))
    (if (i32.lt_s (local.get $k) (local.get $k1))
      (then
        (local.set $o (i32.shl (local.get $k) (i32.const 3)))
        (local.set $sxr (f64.promote_f32 (f32.load (i32.add (local.get $a) (local.get $o)))))
        (local.set $sxi (f64.promote_f32 (f32.load offset=4 (i32.add (local.get $a) (local.get $o)))))
        (local.set $syr (f64.promote_f32 (f32.load (i32.add (local.get $b) (local.get $o)))))
        (local.set $syi (f64.promote_f32 (f32.load offset=4 (i32.add (local.get $b) (local.get $o)))))
        (local.set $sg (f64.mul (f64.load (i32.add (local.get $wa) (local.get $o))) (f64.load (i32.add (local.get $ib) (local.get $o)))))
        (local.set $pr (i32.add (local.get $ar) (local.get $o)))
        (local.set $pi (i32.add (local.get $ai) (local.get $o)))
        (f64.store (local.get $pr)
          (f64.add (f64.mul (local.get $m) (f64.load (local.get $pr)))
            (f64.mul (f64.add (f64.mul (local.get $sxr) (local.get $syr)) (f64.mul (local.get $sxi) (local.get $syi))) (local.get $sg))))
        (f64.store (local.get $pi)
          (f64.add (f64.mul (local.get $m) (f64.load (local.get $pi)))
            (f64.mul (f64.sub (f64.mul (local.get $sxr) (local.get $syi)) (f64.mul (local.get $sxi) (local.get $syr))) (local.get $sg)))))))

  ;; Band scores in float32 (addBandScoresLanes, src/dsp/gcc-lanes.ts) of two pairs, A (ar, ai) and
  ;; B (br, bi), at up to four lags each, one lag per f32x4 lane: the two pairs' phasor
  ;; recursions run side by side (each waits on itself, not on the other). ph (float32) holds A's
  ;; [sr0..sr3 si0..si3 pr0..pr3 pi0..pi3] (the phasor step and the phasor at bin k0 per lag),
  ;; then B's. Per bin and pair: re = f32(ar[k]), im = f32(ai[k]); acc += re * pr - im * pi; the
  ;; phasor steps by a complex multiply; every operation rounded to float32. Band b's sums are
  ;; added in double precision into out[b * stride + 0 .. write - 1], A's and then (with $two) B's.
  ;; Bands whose needed[b] is not above 0 are skipped (their phasors still step); needed = 0: all bands.
  (func (export "band_scores_f32") (param $ar i32) (param $ai i32) (param $br i32) (param $bi i32) (param $two i32)
    (param $ends i32) (param $nb i32) (param $k0 i32) (param $ph i32) (param $out i32) (param $stride i32) (param $needed i32) (param $write i32)
    (local $k i32) (local $b i32) (local $e i32) (local $o i32) (local $skip i32) (local $x i32)
    (local $srA v128) (local $siA v128) (local $prA v128) (local $piA v128)
    (local $srB v128) (local $siB v128) (local $prB v128) (local $piB v128)
    (local $re v128) (local $im v128) (local $accA v128) (local $accB v128) (local $t v128)
    (local.set $srA (v128.load (local.get $ph)))
    (local.set $siA (v128.load offset=16 (local.get $ph)))
    (local.set $prA (v128.load offset=32 (local.get $ph)))
    (local.set $piA (v128.load offset=48 (local.get $ph)))
    (local.set $srB (v128.load offset=64 (local.get $ph)))
    (local.set $siB (v128.load offset=80 (local.get $ph)))
    (local.set $prB (v128.load offset=96 (local.get $ph)))
    (local.set $piB (v128.load offset=112 (local.get $ph)))
    (local.set $k (local.get $k0))
    (local.set $b (i32.const 0))
    (block $bandsDone
      (loop $bands
        (br_if $bandsDone (i32.ge_s (local.get $b) (local.get $nb)))
        (local.set $e (i32.load (i32.add (local.get $ends) (i32.shl (local.get $b) (i32.const 2)))))
        (local.set $skip (i32.const 0))
        (if (local.get $needed)
          (then (local.set $skip (i32.eqz (f64.gt (f64.load (i32.add (local.get $needed) (i32.shl (local.get $b) (i32.const 3)))) (f64.const 0))))))
        (if (local.get $skip)
          (then
            (block $sd
              (loop $sl
                (br_if $sd (i32.ge_s (local.get $k) (local.get $e)))
                (local.set $t (f32x4.sub (f32x4.mul (local.get $prA) (local.get $srA)) (f32x4.mul (local.get $piA) (local.get $siA))))
                (local.set $piA (f32x4.add (f32x4.mul (local.get $prA) (local.get $siA)) (f32x4.mul (local.get $piA) (local.get $srA))))
                (local.set $prA (local.get $t))
                (local.set $t (f32x4.sub (f32x4.mul (local.get $prB) (local.get $srB)) (f32x4.mul (local.get $piB) (local.get $siB))))
                (local.set $piB (f32x4.add (f32x4.mul (local.get $prB) (local.get $siB)) (f32x4.mul (local.get $piB) (local.get $srB))))
                (local.set $prB (local.get $t))
                (local.set $k (i32.add (local.get $k) (i32.const 1)))
                (br $sl))))
          (else
            (local.set $accA (v128.const i64x2 0 0))
            (local.set $accB (v128.const i64x2 0 0))
            (block $d
              (loop $l
                (br_if $d (i32.ge_s (local.get $k) (local.get $e)))
                (local.set $x (i32.shl (local.get $k) (i32.const 3)))
                (local.set $re (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ar) (local.get $x))))))
                (local.set $im (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ai) (local.get $x))))))
                (local.set $accA (f32x4.add (local.get $accA) (f32x4.sub (f32x4.mul (local.get $re) (local.get $prA)) (f32x4.mul (local.get $im) (local.get $piA)))))
                (local.set $re (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $br) (local.get $x))))))
                (local.set $im (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $bi) (local.get $x))))))
                (local.set $accB (f32x4.add (local.get $accB) (f32x4.sub (f32x4.mul (local.get $re) (local.get $prB)) (f32x4.mul (local.get $im) (local.get $piB)))))
                (local.set $t (f32x4.sub (f32x4.mul (local.get $prA) (local.get $srA)) (f32x4.mul (local.get $piA) (local.get $siA))))
                (local.set $piA (f32x4.add (f32x4.mul (local.get $prA) (local.get $siA)) (f32x4.mul (local.get $piA) (local.get $srA))))
                (local.set $prA (local.get $t))
                (local.set $t (f32x4.sub (f32x4.mul (local.get $prB) (local.get $srB)) (f32x4.mul (local.get $piB) (local.get $siB))))
                (local.set $piB (f32x4.add (f32x4.mul (local.get $prB) (local.get $siB)) (f32x4.mul (local.get $piB) (local.get $srB))))
                (local.set $prB (local.get $t))
                (local.set $k (i32.add (local.get $k) (i32.const 1)))
                (br $l)))
            (local.set $o (i32.add (local.get $out) (i32.shl (i32.mul (local.get $b) (local.get $stride)) (i32.const 3))))
            (call $add_lanes (local.get $o) (local.get $accA) (local.get $write))
            (if (local.get $two) (then (call $add_lanes (local.get $o) (local.get $accB) (local.get $write))))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $bands))))

  ;; band_scores_f32 for a pair alone (addBandScoresLanes with `alone`): its bins two at a time in
  ;; two recursions, phasor P at bin k and Q at bin k + 1, both stepping two bins; a band's odd
  ;; last bin goes to P alone, after which P takes Q's place and Q is P stepped (P at the next
  ;; bin, Q at the one after). The two sums of a band are added (aP + aQ) before its score is
  ;; written. ph (float32) holds [sr x4 si x4] (the two-bin step), [pr x4 pi x4] at bin k0 and
  ;; [qr x4 qi x4] at bin k0 + 1. Other arguments as band_scores_f32's.
  (func (export "band_scores_f32_1") (param $ar i32) (param $ai i32) (param $ends i32) (param $nb i32) (param $k0 i32)
    (param $ph i32) (param $out i32) (param $stride i32) (param $needed i32) (param $write i32)
    (local $k i32) (local $b i32) (local $e i32) (local $o i32) (local $skip i32) (local $x i32)
    (local $sr v128) (local $si v128) (local $pr v128) (local $pi v128) (local $qr v128) (local $qi v128)
    (local $re v128) (local $im v128) (local $accP v128) (local $accQ v128) (local $t v128)
    (local.set $sr (v128.load (local.get $ph)))
    (local.set $si (v128.load offset=16 (local.get $ph)))
    (local.set $pr (v128.load offset=32 (local.get $ph)))
    (local.set $pi (v128.load offset=48 (local.get $ph)))
    (local.set $qr (v128.load offset=64 (local.get $ph)))
    (local.set $qi (v128.load offset=80 (local.get $ph)))
    (local.set $k (local.get $k0))
    (local.set $b (i32.const 0))
    (block $bandsDone
      (loop $bands
        (br_if $bandsDone (i32.ge_s (local.get $b) (local.get $nb)))
        (local.set $e (i32.load (i32.add (local.get $ends) (i32.shl (local.get $b) (i32.const 2)))))
        (local.set $skip (i32.const 0))
        (if (local.get $needed)
          (then (local.set $skip (i32.eqz (f64.gt (f64.load (i32.add (local.get $needed) (i32.shl (local.get $b) (i32.const 3)))) (f64.const 0))))))
        (local.set $accP (v128.const i64x2 0 0))
        (local.set $accQ (v128.const i64x2 0 0))
        (block $d
          (loop $l
            (br_if $d (i32.gt_s (i32.add (local.get $k) (i32.const 2)) (local.get $e)))
            (if (i32.eqz (local.get $skip))
              (then
                (local.set $x (i32.shl (local.get $k) (i32.const 3)))
                (local.set $re (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ar) (local.get $x))))))
                (local.set $im (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ai) (local.get $x))))))
                (local.set $accP (f32x4.add (local.get $accP) (f32x4.sub (f32x4.mul (local.get $re) (local.get $pr)) (f32x4.mul (local.get $im) (local.get $pi)))))
                (local.set $re (f32x4.splat (f32.demote_f64 (f64.load offset=8 (i32.add (local.get $ar) (local.get $x))))))
                (local.set $im (f32x4.splat (f32.demote_f64 (f64.load offset=8 (i32.add (local.get $ai) (local.get $x))))))
                (local.set $accQ (f32x4.add (local.get $accQ) (f32x4.sub (f32x4.mul (local.get $re) (local.get $qr)) (f32x4.mul (local.get $im) (local.get $qi)))))))
            (local.set $t (f32x4.sub (f32x4.mul (local.get $pr) (local.get $sr)) (f32x4.mul (local.get $pi) (local.get $si))))
            (local.set $pi (f32x4.add (f32x4.mul (local.get $pr) (local.get $si)) (f32x4.mul (local.get $pi) (local.get $sr))))
            (local.set $pr (local.get $t))
            (local.set $t (f32x4.sub (f32x4.mul (local.get $qr) (local.get $sr)) (f32x4.mul (local.get $qi) (local.get $si))))
            (local.set $qi (f32x4.add (f32x4.mul (local.get $qr) (local.get $si)) (f32x4.mul (local.get $qi) (local.get $sr))))
            (local.set $qr (local.get $t))
            (local.set $k (i32.add (local.get $k) (i32.const 2)))
            (br $l)))
        (if (i32.lt_s (local.get $k) (local.get $e))
          (then
            ;; the band's odd last bin: P alone, then P <- Q and Q <- P stepped
            (if (i32.eqz (local.get $skip))
              (then
                (local.set $x (i32.shl (local.get $k) (i32.const 3)))
                (local.set $re (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ar) (local.get $x))))))
                (local.set $im (f32x4.splat (f32.demote_f64 (f64.load (i32.add (local.get $ai) (local.get $x))))))
                (local.set $accP (f32x4.add (local.get $accP) (f32x4.sub (f32x4.mul (local.get $re) (local.get $pr)) (f32x4.mul (local.get $im) (local.get $pi)))))))
            (local.set $t (f32x4.sub (f32x4.mul (local.get $pr) (local.get $sr)) (f32x4.mul (local.get $pi) (local.get $si))))
            (local.set $pi (f32x4.add (f32x4.mul (local.get $pr) (local.get $si)) (f32x4.mul (local.get $pi) (local.get $sr))))
            (local.set $pr (local.get $qr))
            (local.set $qr (local.get $t))
            (local.set $t (local.get $pi))
            (local.set $pi (local.get $qi))
            (local.set $qi (local.get $t))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))))
        (if (i32.eqz (local.get $skip))
          (then
            (local.set $o (i32.add (local.get $out) (i32.shl (i32.mul (local.get $b) (local.get $stride)) (i32.const 3))))
            (call $add_lanes (local.get $o) (f32x4.add (local.get $accP) (local.get $accQ)) (local.get $write))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $bands))))

  ;; out[i] += lane i of v (float32, promoted), for i < write (1 .. 4).
  (func $add_lanes (param $o i32) (param $v v128) (param $write i32)
    (f64.store (local.get $o) (f64.add (f64.load (local.get $o)) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v)))))
    (if (i32.ge_s (local.get $write) (i32.const 2))
      (then (f64.store offset=8 (local.get $o) (f64.add (f64.load offset=8 (local.get $o)) (f64.promote_f32 (f32x4.extract_lane 1 (local.get $v)))))))
    (if (i32.ge_s (local.get $write) (i32.const 3))
      (then (f64.store offset=16 (local.get $o) (f64.add (f64.load offset=16 (local.get $o)) (f64.promote_f32 (f32x4.extract_lane 2 (local.get $v)))))))
    (if (i32.ge_s (local.get $write) (i32.const 4))
      (then (f64.store offset=24 (local.get $o) (f64.add (f64.load offset=24 (local.get $o)) (f64.promote_f32 (f32x4.extract_lane 3 (local.get $v))))))))

  ;; The Newton refinement's derivatives in float32 (derivativesF32, src/dsp/gcc-lanes.ts): first
  ;; and second derivative of two pairs' correlations (A: arA, aiA; B: arB, aiB) over the bands
  ;; flagged in use[b] (uint8), four neighbouring bins in the four lanes (bins k .. k + 3 of a
  ;; run of used bands; the bands are contiguous, so a run is one range of bins). Per bin, with
  ;; w = f32(w0 k), x = f32(ar[k]), y = f32(ai[k]): d1 -= w (x pi + y pr), d2 -= (w w) (x pr - y pi),
  ;; the phasor stepping four bins at a time; every operation in float32. A run's last one to
  ;; three bins go in a pass with the lanes past its end cleared (x, y and w zero). ph (float32)
  ;; holds [srA x4 siA x4 srB x4 siB x4] (the four-bin steps) and, at ph + 64 + 64 b for each band
  ;; b that starts a run, [prA x4 piA x4 prB x4 piB x4] (the phasors at its bins k .. k + 3).
  ;; Writes the lanes [d1A x4 d2A x4 d1B x4 d2B x4] (float32) at out; without $two, pair A alone
  ;; (B's lanes are written as zeros).
  (func (export "derivatives_f32") (param $arA i32) (param $aiA i32) (param $arB i32) (param $aiB i32) (param $two i32)
    (param $use i32) (param $starts i32) (param $ends i32) (param $nb i32) (param $w0 f32) (param $ph i32) (param $out i32)
    (local $k i32) (local $b i32) (local $e i32) (local $o i32) (local $p i32) (local $rem i32)
    (local $srA v128) (local $siA v128) (local $prA v128) (local $piA v128)
    (local $srB v128) (local $siB v128) (local $prB v128) (local $piB v128)
    (local $d1A v128) (local $d2A v128) (local $d1B v128) (local $d2B v128)
    (local $x v128) (local $y v128) (local $w v128) (local $ww v128) (local $t v128) (local $m v128) (local $kv v128) (local $wv v128)
    (local.set $srA (v128.load (local.get $ph)))
    (local.set $siA (v128.load offset=16 (local.get $ph)))
    (local.set $srB (v128.load offset=32 (local.get $ph)))
    (local.set $siB (v128.load offset=48 (local.get $ph)))
    (local.set $wv (f32x4.splat (local.get $w0)))
    (local.set $d1A (v128.const i64x2 0 0))
    (local.set $d2A (v128.const i64x2 0 0))
    (local.set $d1B (v128.const i64x2 0 0))
    (local.set $d2B (v128.const i64x2 0 0))
    (local.set $b (i32.const 0))
    (block $bandsDone
      (loop $bands
        (br_if $bandsDone (i32.ge_s (local.get $b) (local.get $nb)))
        (if (i32.load8_u (i32.add (local.get $use) (local.get $b)))
          (then
            ;; the run of used bands from b: bins k .. e
            (local.set $k (i32.load (i32.add (local.get $starts) (i32.shl (local.get $b) (i32.const 2)))))
            (local.set $p (i32.add (local.get $ph) (i32.add (i32.const 64) (i32.shl (local.get $b) (i32.const 6)))))
            (local.set $prA (v128.load (local.get $p)))
            (local.set $piA (v128.load offset=16 (local.get $p)))
            (local.set $prB (v128.load offset=32 (local.get $p)))
            (local.set $piB (v128.load offset=48 (local.get $p)))
            (block $runDone
              (loop $run
                (br_if $runDone (i32.ge_s (i32.add (local.get $b) (i32.const 1)) (local.get $nb)))
                (br_if $runDone (i32.eqz (i32.load8_u (i32.add (i32.add (local.get $use) (local.get $b)) (i32.const 1)))))
                (local.set $b (i32.add (local.get $b) (i32.const 1)))
                (br $run)))
            (local.set $e (i32.load (i32.add (local.get $ends) (i32.shl (local.get $b) (i32.const 2)))))
            (local.set $kv (f32x4.convert_i32x4_s (i32x4.add (i32x4.splat (local.get $k)) (v128.const i32x4 0 1 2 3))))
            (block $d
              (loop $l
                (br_if $d (i32.ge_s (local.get $k) (local.get $e)))
                (local.set $rem (i32.sub (local.get $e) (local.get $k)))
                ;; lanes at or past the run's end: cleared (mask all ones for the lanes within it)
                (local.set $m (i32x4.lt_s (v128.const i32x4 0 1 2 3) (i32x4.splat (local.get $rem))))
                (local.set $w (v128.and (f32x4.mul (local.get $wv) (local.get $kv)) (local.get $m)))
                (local.set $ww (f32x4.mul (local.get $w) (local.get $w)))
                (local.set $o (i32.shl (local.get $k) (i32.const 3)))
                (local.set $x (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
                  (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $arA) (local.get $o))))
                  (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $arA) (local.get $o)))))))
                (local.set $y (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
                  (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $aiA) (local.get $o))))
                  (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $aiA) (local.get $o)))))))
                (local.set $d1A (f32x4.sub (local.get $d1A)
                  (f32x4.mul (local.get $w) (f32x4.add (f32x4.mul (local.get $x) (local.get $piA)) (f32x4.mul (local.get $y) (local.get $prA))))))
                (local.set $d2A (f32x4.sub (local.get $d2A)
                  (f32x4.mul (local.get $ww) (f32x4.sub (f32x4.mul (local.get $x) (local.get $prA)) (f32x4.mul (local.get $y) (local.get $piA))))))
                (local.set $t (f32x4.sub (f32x4.mul (local.get $prA) (local.get $srA)) (f32x4.mul (local.get $piA) (local.get $siA))))
                (local.set $piA (f32x4.add (f32x4.mul (local.get $prA) (local.get $siA)) (f32x4.mul (local.get $piA) (local.get $srA))))
                (local.set $prA (local.get $t))
                (if (local.get $two)
                  (then
                    (local.set $x (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
                      (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $arB) (local.get $o))))
                      (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $arB) (local.get $o)))))))
                    (local.set $y (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
                      (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $aiB) (local.get $o))))
                      (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $aiB) (local.get $o)))))))
                    (local.set $d1B (f32x4.sub (local.get $d1B)
                      (f32x4.mul (local.get $w) (f32x4.add (f32x4.mul (local.get $x) (local.get $piB)) (f32x4.mul (local.get $y) (local.get $prB))))))
                    (local.set $d2B (f32x4.sub (local.get $d2B)
                      (f32x4.mul (local.get $ww) (f32x4.sub (f32x4.mul (local.get $x) (local.get $prB)) (f32x4.mul (local.get $y) (local.get $piB))))))
                    (local.set $t (f32x4.sub (f32x4.mul (local.get $prB) (local.get $srB)) (f32x4.mul (local.get $piB) (local.get $siB))))
                    (local.set $piB (f32x4.add (f32x4.mul (local.get $prB) (local.get $siB)) (f32x4.mul (local.get $piB) (local.get $srB))))
                    (local.set $prB (local.get $t))))
                (local.set $kv (f32x4.add (local.get $kv) (v128.const f32x4 4 4 4 4)))
                (local.set $k (i32.add (local.get $k) (i32.const 4)))
                (br $l)))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $bands)))
    (v128.store (local.get $out) (local.get $d1A))
    (v128.store offset=16 (local.get $out) (local.get $d2A))
    (v128.store offset=32 (local.get $out) (local.get $d1B))
    (v128.store offset=48 (local.get $out) (local.get $d2B)))

  ;; The hop coherence of a pair alone in float32 (hopCoherenceF32, src/dsp/gcc-lanes.ts): bins
  ;; [k0, k1) of spectra a and b (interleaved float32) four neighbouring bins to the four lanes,
  ;; the phasors stepping four bins; the last one to three bins with the lanes past k1 cleared
  ;; (spectra and magnitudes zero). Per bin: g = f32(ia[k]) f32(ib[k]), cr = xr yr + xi yi,
  ;; ci = xr yi - xi yr, acc += (cr pr - ci pi) g; every operation in float32. ph (float32) holds
  ;; [sr x4 si x4] (the four-bin step) and [pr x4 pi x4] at bins k0 .. k0 + 3. Writes acc (f32x4) at out.
  (func (export "hop_coherence_1f") (param $a i32) (param $b i32) (param $ia i32) (param $ib i32) (param $k0 i32) (param $k1 i32) (param $ph i32) (param $out i32)
    (local $k i32) (local $o i32) (local $o8 i32)
    (local $sr v128) (local $si v128) (local $pr v128) (local $pi v128) (local $acc v128) (local $t v128) (local $m v128)
    (local $x0 v128) (local $x1 v128) (local $xr v128) (local $xi v128) (local $yr v128) (local $yi v128) (local $g v128) (local $cr v128) (local $ci v128)
    (local.set $sr (v128.load (local.get $ph)))
    (local.set $si (v128.load offset=16 (local.get $ph)))
    (local.set $pr (v128.load offset=32 (local.get $ph)))
    (local.set $pi (v128.load offset=48 (local.get $ph)))
    (local.set $acc (v128.const i64x2 0 0))
    (local.set $k (local.get $k0))
    (block $d
      (loop $l
        (br_if $d (i32.ge_s (local.get $k) (local.get $k1)))
        (local.set $m (i32x4.lt_s (v128.const i32x4 0 1 2 3) (i32x4.splat (i32.sub (local.get $k1) (local.get $k)))))
        (local.set $o8 (i32.shl (local.get $k) (i32.const 3)))
        (local.set $x0 (v128.load (i32.add (local.get $a) (local.get $o8))))
        (local.set $x1 (v128.load offset=16 (i32.add (local.get $a) (local.get $o8))))
        (local.set $xr (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 8 9 10 11 16 17 18 19 24 25 26 27 (local.get $x0) (local.get $x1))))
        (local.set $xi (v128.and (local.get $m) (i8x16.shuffle 4 5 6 7 12 13 14 15 20 21 22 23 28 29 30 31 (local.get $x0) (local.get $x1))))
        (local.set $x0 (v128.load (i32.add (local.get $b) (local.get $o8))))
        (local.set $x1 (v128.load offset=16 (i32.add (local.get $b) (local.get $o8))))
        (local.set $yr (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 8 9 10 11 16 17 18 19 24 25 26 27 (local.get $x0) (local.get $x1))))
        (local.set $yi (v128.and (local.get $m) (i8x16.shuffle 4 5 6 7 12 13 14 15 20 21 22 23 28 29 30 31 (local.get $x0) (local.get $x1))))
        (local.set $g (f32x4.mul
          (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
            (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $ia) (local.get $o8))))
            (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $ia) (local.get $o8))))))
          (v128.and (local.get $m) (i8x16.shuffle 0 1 2 3 4 5 6 7 16 17 18 19 20 21 22 23
            (f32x4.demote_f64x2_zero (v128.load (i32.add (local.get $ib) (local.get $o8))))
            (f32x4.demote_f64x2_zero (v128.load offset=16 (i32.add (local.get $ib) (local.get $o8))))))))
        (local.set $cr (f32x4.add (f32x4.mul (local.get $xr) (local.get $yr)) (f32x4.mul (local.get $xi) (local.get $yi))))
        (local.set $ci (f32x4.sub (f32x4.mul (local.get $xr) (local.get $yi)) (f32x4.mul (local.get $xi) (local.get $yr))))
        (local.set $acc (f32x4.add (local.get $acc)
          (f32x4.mul (f32x4.sub (f32x4.mul (local.get $cr) (local.get $pr)) (f32x4.mul (local.get $ci) (local.get $pi))) (local.get $g))))
        (local.set $t (f32x4.sub (f32x4.mul (local.get $pr) (local.get $sr)) (f32x4.mul (local.get $pi) (local.get $si))))
        (local.set $pi (f32x4.add (f32x4.mul (local.get $pr) (local.get $si)) (f32x4.mul (local.get $pi) (local.get $sr))))
        (local.set $pr (local.get $t))
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br $l)))
    (v128.store (local.get $out) (local.get $acc)))

  ;; Hop coherence of four pairs at once in float32 (hopCoherenceLanes, src/dsp/gcc-lanes.ts),
  ;; from the unit spectra of magnitudes (with $ut): per bin, $nv vectors of four channels' real parts, then
  ;; $nv of their imaginary parts ($stride bytes a bin). Lane i is pair (a_i, b_i): its unit
  ;; spectra are picked out of the vectors by byte swizzles, idx holding per vector v the
  ;; indices for a (16 bytes) and for b (16 bytes), out-of-range (128) where the channel lies
  ;; in another vector. Per bin: cr = ar br + ai bi, ci = ar bi - ai br, acc += cr pr - ci pi,
  ;; the phasor steps by a complex multiply; every operation in float32. ph holds [sr x4, si x4,
  ;; pr x4, pi x4] (the steps and the phasors at bin k0). Writes the four sums (f32x4) at out.
  (func (export "hop_coherence_t") (param $ut i32) (param $stride i32) (param $nv i32) (param $k0 i32) (param $k1 i32)
    (param $ph i32) (param $idx i32) (param $out i32)
    (local $k i32) (local $v i32) (local $at i32) (local $iv i32) (local $half i32)
    (local $sr v128) (local $si v128) (local $pr v128) (local $pi v128) (local $acc v128) (local $t v128)
    (local $re v128) (local $im v128) (local $ar v128) (local $ai v128) (local $br v128) (local $bi v128)
    (local $ia v128) (local $ib v128) (local $cr v128) (local $ci v128)
    (local.set $sr (v128.load (local.get $ph)))
    (local.set $si (v128.load offset=16 (local.get $ph)))
    (local.set $pr (v128.load offset=32 (local.get $ph)))
    (local.set $pi (v128.load offset=48 (local.get $ph)))
    (local.set $acc (v128.const i64x2 0 0))
    (local.set $half (i32.shl (local.get $nv) (i32.const 4)))
    (local.set $k (local.get $k0))
    (block $d
      (loop $l
        (br_if $d (i32.ge_s (local.get $k) (local.get $k1)))
        (local.set $at (i32.add (local.get $ut) (i32.mul (local.get $k) (local.get $stride))))
        (local.set $ia (v128.load (local.get $idx)))
        (local.set $ib (v128.load offset=16 (local.get $idx)))
        (local.set $re (v128.load (local.get $at)))
        (local.set $im (v128.load (i32.add (local.get $at) (local.get $half))))
        (local.set $ar (i8x16.swizzle (local.get $re) (local.get $ia)))
        (local.set $ai (i8x16.swizzle (local.get $im) (local.get $ia)))
        (local.set $br (i8x16.swizzle (local.get $re) (local.get $ib)))
        (local.set $bi (i8x16.swizzle (local.get $im) (local.get $ib)))
        (local.set $v (i32.const 1))
        (block $vd
          (loop $vl
            (br_if $vd (i32.ge_s (local.get $v) (local.get $nv)))
            (local.set $iv (i32.add (local.get $idx) (i32.shl (local.get $v) (i32.const 5))))
            (local.set $ia (v128.load (local.get $iv)))
            (local.set $ib (v128.load offset=16 (local.get $iv)))
            (local.set $re (v128.load (i32.add (local.get $at) (i32.shl (local.get $v) (i32.const 4)))))
            (local.set $im (v128.load (i32.add (i32.add (local.get $at) (local.get $half)) (i32.shl (local.get $v) (i32.const 4)))))
            (local.set $ar (v128.or (local.get $ar) (i8x16.swizzle (local.get $re) (local.get $ia))))
            (local.set $ai (v128.or (local.get $ai) (i8x16.swizzle (local.get $im) (local.get $ia))))
            (local.set $br (v128.or (local.get $br) (i8x16.swizzle (local.get $re) (local.get $ib))))
            (local.set $bi (v128.or (local.get $bi) (i8x16.swizzle (local.get $im) (local.get $ib))))
            (local.set $v (i32.add (local.get $v) (i32.const 1)))
            (br $vl)))
        (local.set $cr (f32x4.add (f32x4.mul (local.get $ar) (local.get $br)) (f32x4.mul (local.get $ai) (local.get $bi))))
        (local.set $ci (f32x4.sub (f32x4.mul (local.get $ar) (local.get $bi)) (f32x4.mul (local.get $ai) (local.get $br))))
        (local.set $acc (f32x4.add (local.get $acc) (f32x4.sub (f32x4.mul (local.get $cr) (local.get $pr)) (f32x4.mul (local.get $ci) (local.get $pi)))))
        (local.set $t (f32x4.sub (f32x4.mul (local.get $pr) (local.get $sr)) (f32x4.mul (local.get $pi) (local.get $si))))
        (local.set $pi (f32x4.add (f32x4.mul (local.get $pr) (local.get $si)) (f32x4.mul (local.get $pi) (local.get $sr))))
        (local.set $pr (local.get $t))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $l)))
    (v128.store (local.get $out) (local.get $acc)))
)
