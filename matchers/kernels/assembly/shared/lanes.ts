// Lane reductions shared by the AssemblyScript kernels (compiled into each module that
// imports them; @inline leaves no call behind). Not a module of its own: the build
// compiles matchers/<name>/assembly/*.ts only. Moving hmin16 here from block.ts and
// sgm.ts (and pathPixel onto sgm.ts's lBlock) left both .wasm files byte for byte the same.

// Smallest lane of a vector of 8 uint16.
@inline
export function hmin16(v: v128): i32 {
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 4, 5, 6, 7, 0, 1, 2, 3));
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 2, 3, 0, 1, 2, 3, 0, 1));
  v = i16x8.min_u(v, i16x8.shuffle(v, v, 1, 0, 1, 0, 1, 0, 1, 0));
  return <i32>i16x8.extract_lane_u(v, 0);
}
