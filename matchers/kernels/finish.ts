/**
 * The common end of a cost-volume matcher: left-view winner-take-all (with the
 * uniqueness test and subpixel fit as asked), the right view when the left-right check
 * needs it, then the shared post-processing. `lap` marks stage times (sgm's benchmark).
 */
import { applyPostprocess, type ConfidenceSink, type PostprocessOptions } from './postprocess.js';
import { wta, wtaRight, type CostVolume } from './wta.js';

export function finishVolume(
  vol: CostVolume,
  size: { width: number; height: number; levels: number; minDisparity: number },
  post: PostprocessOptions,
  lap: (stage: string) => void = () => {},
  sink?: ConfidenceSink,
): Float32Array {
  const { width, height, levels, minDisparity } = size;
  const dispL = wta(vol, width, height, levels, minDisparity, { subpix: post.subpix, uniqueness: post.uniq });
  lap('wta');
  const dispR = post.lr > 0 ? wtaRight(vol, width, height, levels, minDisparity, { subpix: post.subpix }) : null;
  lap('wtaRight');
  applyPostprocess(dispL, dispR, width, height, post, sink);
  lap('post');
  return dispL;
}
