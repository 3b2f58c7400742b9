/**
 * The source tracker: follows several sources over time on the circle (or the sphere, when
 * candidates carry elevations, or the half circle of an array whose mirror flips azimuth: a
 * pair, a line, an upright planar array) and cuts each track's
 * activity into events. Pure and deterministic: one update() per hop, no clocks, no I/O; all
 * state lives in slots allocated once (maxTracks of them); event records and summaries are
 * allocated when they are made, and a hop otherwise allocates only the numbers the engine boxes
 * where a call it did not inline returns one (the tracker bench, test/bench/tracker.ts, 3
 * callers and 4 candidates: 100-330 bytes per hop over three runs, as the engine inlines more or
 * less; 660 before costInto left its result in a typed array and the resultant length took a
 * square root instead of Math.hypot).
 *
 * Per hop:
 * 1. predict every live track to the hop's time (angle-filter.ts);
 * 2. gate each candidate against each track by the Mahalanobis distance of its innovation
 *    (azimuth, and elevation unless the array is flat, where a candidate far above the track in
 *    elevation, FLAT_ELEVATION_GATE_DEG, is only kept out: keptOutOnFlat); a confirmed track
 *    that has gone REST_AFTER_S without support is also gated at its resting place (where it was
 *    last supported, still; REST_DRIFT_DEG_S; at REST_COST over a prediction's cost), and a
 *    mover's up to TREND_MAX_S at its trend (where its lifetime drift carries it:
 *    TREND_SPAN_S), whichever is cheapest, and one whose lifetime drift is small coasts there
 *    (STILL_DRIFT_DEG_S); a candidate in another band than the track's calls (BAND_APART_OCT)
 *    is outside every gate of that track, and one outside a settled track's own, tighter band
 *    (OWN_BAND_SPREADS) is outside its gates off its home and only its last choice at its home;
 *    a settled track is gated at its home too, and at its prediction only within
 *    SETTLED_REACH_DEG of its home;
 *    a candidate whose hop confidence x score is below minConfidence is ignored, and so is
 *    every candidate of a hop below the event-leave SNR (sound at the noise floor, such as
 *    coherent wind between calls, neither moves nor starts a track);
 * 3. a candidate that is an aliased lobe of another (aliasOf: the same sound, which the array
 *    cannot place between the two) stands in for it only where no confirmed track explains the
 *    other and a confirmed track moved by readings of its own within ALIAS_WITHIN_S gates the
 *    alias (resolveAliases), and never starts or feeds a tentative track;
 *    then assign candidates to confirmed tracks by global nearest neighbour (assignment.ts), then
 *    the leftovers to tentative tracks, and update the assigned tracks (a hop whose own spectra
 *    do not support its answer, HELD_Z, or that is below the event-enter confidence, tooWeakToMove,
 *    or a candidate heard only under a louder caller, underLouder, supports its track without
 *    moving it, and supports no tentative track; a reading with another caller's within
 *    CROWD_DEG, markCrowded, moves its track with CROWD_NOISE times the measurement variance);
 * 4. a leftover candidate with hop confidence x score >= birthConfidence, outside every track's gate
 *    (on a flat array a track near the zenith does not count for one far below it),
 *    not near the zenith (ZENITH_DEG) and not heard only under a louder caller, starts a
 *    tentative track; it is confirmed (and gets the next track id, or a dormant track's id when
 *    it lies within that track's resting place's gate, or a young mover's when it lies ahead of
 *    that mover's last reading: ONWARD_SPAN_S) after confirmHits supported hops within
 *    confirmWindow hops, else dropped;
 * 5. confirmed tracks coast (prediction only, uncertainty growing to maxUncertaintyDeg) while
 *    unsupported and die after trackTimeoutS without a support that moved them (a settled
 *    track, below: after staticTimeoutS, so a chorus keeps its id through long pauses; when
 *    every slot is taken, the settled track quiet longest beyond trackTimeoutS makes room, after
 *    any dormant one); a track of DORMANT_EVENTS events or fewer that moved over less than
 *    DORMANT_SPAN_S is dormant after DORMANT_AFTER_S without moving (it takes no candidate and blocks no birth, but lends its id,
 *    above, and gives up its slot when every slot is taken);
 *    a *settled* confirmed track (followed for at least SETTLED_SPAN_S with a lifetime spread of
 *    at most bearingNoiseDeg: a static chorus) also keeps a home, its lifetime mean, and gates
 *    a candidate by its home as well as by its prediction. A candidate within a settled
 *    track's home starts no new track, and feeds an unsettled track only if it lies outside
 *    the settled track's own band or that track was supported outside every home (in azimuth)
 *    within the last PASSING_S seconds,
 *    PASSING_MOVER_S for a track moving at PASSING_RATE_DEG_S or faster (a caller passing
 *    through); so a chorus calling again after a pause is re-acquired, and a track whose
 *    caller went quiet on, or stopped at, a chorus' bearing does not carry the chorus off.
 *    A settled track (also: rate and lifetime drift at most SETTLED_MAX_RATE_DEG_S) is held
 *    static: each hop it is predicted at its home with no rate, its angle uncertainty within its
 *    home's and its rate's within --rate-wander, so a passer's call a few gates away is nearer to
 *    the passer's own track than to a chorus that has been quiet for seconds, and a chorus track
 *    that takes a passer's call near its bearing does not follow the passer away;
 * 6. the event cutter (event-cutter.ts) sees every live track every hop, and whether the
 *    track's candidate was heard only under a louder caller whose track took the hop's answer
 *    (onsetElsewhere: the hop's onset is that caller's and splits no event of this one);
 * 7. after the hop, watchList names the confirmed tracks whose callers the analysis should look
 *    for under a louder caller in the next hop (src/analysis/watched-directions.ts; the
 *    tracking session hands them on).
 *
 * Two sources closer than about gateSigma x bearingNoiseDeg look like one and share a track.
 */
import { RuntimeFailure } from '../util/errors.js';
import { foldedOffsetDeg } from '../geometry/array-mirror.js';
import type { EventRecord } from '../records/record-types.js';
import { AngleFilterBank, IO_DT, IO_HOLD_RATE, IO_R, IO_RATE_SIGMA, IO_Z } from './angle-filter.js';
import { NearestNeighbourAssigner } from './assignment.js';
import { DirectionSums } from './direction-sums.js';
import { EventCutter, ZENITH_DEG } from './event-cutter.js';
import { wrapDeg } from './circular.js';
import { BAND_HI, BAND_LO, CONFIDENCE, DT, FRESH_Z, HOP_S, HopScratch, LEVEL, ONSET, SNR, TIME } from './hop-scratch.js';
import { resolveTrackerOptions, type TrackerOptions, type TrackerSettings } from './options.js';
import type { DirectionCandidate, HopObservation, TrackSummary, TrackUpdate } from './types.js';

const FREE = 0;
const TENTATIVE = 1;
const CONFIRMED = 2;

/**
 * A confirmed track supported within this many seconds is watched for (watchList) ... Two callers
 * crossing at once: the quieter one's calls fall under the louder one's for seconds on end, and
 * with 2 s its track stopped being watched with its caller 15-20 deg from the other and its
 * prediction within 2 deg (motion matrix draw 22, crs04: b 60 -> 65 %; draw 1001, crs02: b 50 ->
 * 70 %). 3, 4 and 6 s alike on those cells. Crossing and chorus cells of 23 draws at 48 kHz, 4 s
 * against 2: three crossing cells gained calls, none lost any; id switches and tracks holding
 * two as before (measured beside a rule since withdrawn). With the settling drift test
 * (SETTLED_MAX_RATE_DEG_S), crossing cells at 48 kHz summed completeness 253.1 -> 253.9 of 276
 * callers, at 16 kHz 249.3 -> 250.0 (a track holding two fewer); chorus cells identical.
 */
const WATCH_WITHIN_S = 4;
/**
 * ... unless another confirmed track lies within this many degrees of it: two callers that near
 * each other read as one, and a track watched there took its crossing partner's calls (a swap).
 * 12 deg before readings of two callers in one hop moved their tracks with twice the
 * measurement variance (CROWD_DEG). Since then, motion matrix, 23 draws (sources under 80 %
 * complete / id switches / tracks holding two): crossings 47 / 29 / 7 at 12 deg, 44 / 27 / 6 at
 * 10 (kept), 45 / 30 / 8 at 8, 44 / 31 / 8 at 6, 51 / 31 / 9 at 16; at 10 the choruses 27 / 38 /
 * 10 -> 25 / 38 / 10 and the passes 9 / 25 / 0 -> 9 / 26 / 0 (a lobe's switch in the 80 deg/s
 * high sweep of draw 555); ten further draws and the accuracy matrix unchanged.
 */
const WATCH_CLEAR_DEG = 10;
/**
 * Two callers heard in one hop within this many degrees of each other each read drawn towards
 * the other: the louder or broader one wins the bands they share, and the bins of two low calls
 * on a small array hold both. Such a reading moves its track with CROWD_NOISE times the
 * measurement variance, so a crossing partner's pull does not turn the track's rate. Motion matrix
 * draw 9999, crs05 (two low harmonic callers crossing on a 10 cm triangle): b's track stood at 129
 * deg moving at -3.5 deg/s when a, 29 deg away, called over b's call; b was read at 135-139 and
 * the track turned to +5 deg/s, so b's next call, at 124 and 13 deg from the prediction, started
 * a new track for the rest of the pass. Not for a candidate within a settled track's home, or
 * another there: a settled chorus is held at its home anyway (step 5 above), and with them a lobe's
 * track beside a chorus lived on and took one of the chorus' calls (draw 4711, cho01: +2 id
 * switches). Chosen on the motion matrix (crossing cells of 23 draws: sources under 80 %
 * complete / id switches / tracks holding two; 50 / 38 / 10 without): 40 deg with 4 times the
 * variance 47 / 31 / 7 but chorus cells 27 / 38 / 10 -> 30 / 44 / 11 (the settled homes not left
 * out), 26 / 43 / 11 (left out); with 2 times 47 / 29 / 7 and the chorus cells as without
 * (kept); 25 and 60 deg with 8 times 49 / 30 / 6 and 49 / 35 / 7; 16 times 49 / 26 / 6; no move
 * at all (keeping the track alive only) 59 / 50 / 16; only where two confirmed tracks lie within
 * 40 deg of the reading 47 / 31 / 7 and the passes' switches 25 -> 29. A cost: the 80 deg/s high
 * sweep on a 20 cm square is read beside its aliased lobe, which crowds it too (mean completeness
 * over the 23 draws 81.8 -> 80.1 %, 15 draws at 80 % or more as before).
 */
const CROWD_DEG = 40;
const CROWD_NOISE = 2;
/**
 * A candidate's azimuth moves its track (and is gated) as a measurement of variance
 * READING_VARIANCE_SCALE x bearingNoise^2 / score (score its confidence x the analysis' score, at
 * least MIN_SCORE). The scale is above 1 because a hop's reading is not independent of the last
 * one: the analysis' memory (0.15 s, about 14 hops at 48 kHz) carries most of a hop's evidence
 * into the next, so a filter given the spread of one reading takes a run of them for more than
 * they hold, and its rate follows a crossing partner's pull or a misread stretch of a call (the
 * Kalman filter assumes white measurement noise; common practice, no source). The option's other
 * uses (a settled track's spread, the watch's half-width, the crowd test) and the elevation keep
 * bearingNoise itself: --bearing-noise 3.67 (1.5 x the variance everywhere) gave crossings 54 /
 * 35 / 20 against 44 / 27 / 6; the elevation scaled too let a caller's track 65 deg up take
 * confident readings at 86 deg (wind at the zenith) and follow them round the circle
 * (test/track/tracker.test.ts, "candidates at the zenith start no track"). Chosen on the motion
 * matrix, 23 draws (sources under 80 % complete / id switches / tracks holding two), crossings
 * with azimuth and elevation scaled alike: 1 (before) 44 / 27 / 6, 1.25 45 / 22 / 7, 1.5 44 / 18
 * / 8, 1.75 43 / 20 / 8, 2 45 / 20 / 10, 3 54 / 27 / 18; the update alone scaled (gate as before)
 * 1.5 47 / 27 / 10, 2 45 / 21 / 9; the gate alone 48 / 28 / 10. Azimuth alone at 1.5 (kept):
 * crossings 47 / 20 / 10, choruses 25 / 34 / 10 -> 26 / 34 / 11, passes 9 / 26 / 0 -> 8 / 18 / 0;
 * all 23 draws (sources >= 80 % complete summed in per cent / id switches / tracks holding two)
 * 2176 / 87 / 16 -> 2174 / 72 / 21, motion cells outside the targets 95 -> 87; ten
 * further draws (333..1414) 910 / 76 / 21 -> 915 / 55 / 15 (crossings 751 / 24 / 14 -> 792 / 11 /
 * 8). The accuracy matrix: every hop as before (the tracker does not change them), events per
 * call 1.15 -> 1.14 (crossings 1.31 -> 1.28).
 */
const READING_VARIANCE_SCALE = 1.5;
/** Score floor for the measurement variance bearingNoise^2 / score (x READING_VARIANCE_SCALE in azimuth). */
const MIN_SCORE = 0.05;
/** Floor on cos(elevation) when widening the azimuth noise of high candidates. */
const MIN_COS_ELEVATION = 0.2;
const DEG = Math.PI / 180;
/** A confirmed track followed this long (first to last support) with a small lifetime spread is settled. */
const SETTLED_SPAN_S = 3;
/**
 * ... and whose rate, and lifetime drift (the fitted slope of its bearing over time,
 * direction-sums.ts), are at most this (deg/s): a slow mover whose bearings still fall within the
 * spread (2.5 deg/s over 3 s) keeps following its caller. The drift too: the filter's rate alone
 * can dip under it while a slow mover's readings are drawn towards a crossing partner, and a
 * caller walking at 1.5 deg/s on a 20 cm square was then held at a home it left behind; its
 * calls 13 deg on were beyond the home's reach yet inside its gate, so they neither joined it nor
 * started a track (motion matrix draw 8080, crs03: 5 of 12 calls on its track; with the drift
 * test 9 of 12; draw 555 crs01 likewise 31 -> 54 %).
 */
const SETTLED_MAX_RATE_DEG_S = 1;
/**
 * A settled track takes a candidate through its home's gate or through its ordinary gate (the
 * filter's, as wide as the bearing noise allows: about 12 degrees), but through the ordinary gate
 * only within this many degrees of its home. A passer's first call 11 degrees off a settled
 * chorus' home joined the chorus' track (motion matrix draw 6060, cho01, at its three speeds of
 * sound; test/track/tracker.test.ts). Ten draws (sources >= 80 % complete summed / id switches /
 * tracks holding two): 892 / 44 / 16 without, 893 / 45 / 13 with 8 degrees (choruses 933 / 15 / 8
 * -> 936 / 16 / 5; passes and crossings as before; held out 2718, 4040, 9999 as before); accuracy
 * matrix: every hop as before, events per call as before but x22c 1.75 -> 1.63. Gated at the home
 * alone (home spread at least 1.5 degrees, so 5.25 degrees) the choruses' own readings fell
 * outside it: 875 / 300 / 47.
 */
const SETTLED_REACH_DEG = 8;
/**
 * An unsettled track may take a candidate in a settled home this long after its last support
 * outside every home, seconds; at any time one outside the own band of the settled track whose
 * home holds it (OWN_BAND_SPREADS: no call of that chorus).
 */
const PASSING_S = 1;
/**
 * ... or this long, seconds, while its rate is at least PASSING_RATE_DEG_S: a mover whose
 * bearing crosses a chorus' home (its gate 5-7 degrees either side) at about 20 deg/s has calls
 * on the home for 0.7 s and more, and with calls every 0.55 s its second call on the home came
 * 1.01 s after its last one outside: within PASSING_S alone that call went to the chorus' track
 * (motion matrix draw 33 cho04 at 16 kHz at its three speeds of sound: the passer 2 id switches,
 * the chorus' track 93 % pure; test/accuracy/motion-cells.test.ts). Not for slower tracks: with 2
 * s for every track a ghost track creeping towards a chorus at about 7 deg/s took the chorus'
 * calls (draw 999 cho04 at 48 kHz: 2 id switches). Motion matrix (sources under 80 % on their
 * main track / id switches / tracks holding two): 48 kHz, 23 draws and ten further, every cell
 * as with 1 s; 16 kHz, 23 draws 114 / 119 / 42 -> 114 / 113 / 39, ten further 50 / 47 / 10 ->
 * 48 / 47 / 10.
 */
const PASSING_MOVER_S = 2;
const PASSING_RATE_DEG_S = 10;
/**
 * Floor on the standard deviation of a settled track's home, degrees. The home's spread is
 * that of the track's own hop azimuths, so it already holds the measurement noise: a
 * candidate is home when within gateSigma x max(spread, this) of the home.
 */
const HOME_MIN_SD_DEG = 1.5;
/** The same for the home's elevation, which a planar array measures far more loosely than azimuth. */
const HOME_MIN_EL_SD_DEG = 6;

/**
 * A candidate above ZENITH_DEG of elevation, or below -ZENITH_DEG (./event-cutter.ts: within 12
 * deg of the zenith or nadir), starts no track: the azimuth a track follows is undefined there
 * (a flat array reads zero delays on every pair as straight overhead, which is also what sound
 * arriving at all mics at once gives: the coherent part of wind buffeting, which read as
 * confident callers overhead). It may still support a live track whose lifetime mean elevation
 * is above NEAR_ZENITH_TRACK_DEG, with its azimuth noise widened by 1 / cos^2 elevation (its
 * azimuth would drag any other track off its caller).
 */
const NEAR_ZENITH_TRACK_DEG = 58;
/**
 * A confirmed track of at most DORMANT_EVENTS events whose supports that moved it span less than
 * DORMANT_SPAN_S (one call, or a short blend of two callers) and that has not moved for
 * DORMANT_AFTER_S is dormant: it takes no candidate and keeps none from starting a track, and a
 * new track confirmed within its resting place's gate takes its id instead of a new one. So a
 * short-lived track of stray directions cannot take a caller passing its bearing seconds later
 * (a blend of two choruses, its gate grown to 8 deg, took a passer's calls from the passer's own
 * track, test/accuracy/motion-cells.test.ts), and a caller that calls once every few
 * seconds keeps one id (such a track died after 2 s before: a new id per call). Motion matrix,
 * ten draws (sources >= 80 % complete summed / id switches / tracks holding two): 825 / 81 / 16
 * -> 825 / 75 / 16 (at most one event: 825 / 77 / 16); without the event count (any track that
 * moved over less than 2 s) 825 / 77 / 18: a crossing's second caller, read for 1.9 s (four
 * events) and then taken by the first, lent its id to the first caller's new track.
 */
const DORMANT_EVENTS = 2;
const DORMANT_SPAN_S = 2;
const DORMANT_AFTER_S = 2;
/**
 * A confirmed track that is not settled is gated by two models of its caller (the two-model idea
 * of interacting-multiple-model tracking, common practice in manoeuvring-target tracking, no
 * single source): its filter's prediction (moving at its rate) and its resting place (the
 * angle where it was last supported, still), whichever is the cheaper. A chorus whose rate was
 * set by a few biased hops within one call (128 to 145 degrees in 0.15 s: 11 deg/s) otherwise
 * coasts away at that rate through a pause of several seconds and is born again as a new track
 * when it calls again. The resting place's uncertainty grows at this rate, deg/s (a caller
 * that does not fly walks or creeps at most this fast between its calls), to the filter's cap.
 */
const REST_DRIFT_DEG_S = 1;
/**
 * The resting place is asked only after this long without support, seconds: within a call and
 * across the short gaps between the calls of one caller the filter's prediction carries the
 * rate a mover needs (asked every hop, the still model won on its smaller variance and kept
 * resetting passing callers' rates to zero).
 */
const REST_AFTER_S = 1.5;
/**
 * A candidate's cost through a track's resting place (restGate) is this much higher than the
 * same fit through a prediction (the gate's cost: d^2 - gate^2 plus the log of the variance): the
 * resting place is a fallback for a caller its filter has lost, and yields to a mover whose
 * prediction fits about as well. A caller unheard for seconds beside a crossing (masked by its
 * partner) left its track resting where it was last heard; its partner's next call past that
 * place fitted the resting place better by 0.2 than its own prediction (2.8 deg behind it), and
 * the two swapped ids (motion matrix draw 1001, crs02). Motion matrix (sources under 80 % on their
 * main track / id switches / tracks holding two; cells outside the issue-13 targets), 48 kHz, 23
 * draws: without 73 / 65 / 15, 76; at 1 71 / 59 / 11, 76; at 2 71 / 57 / 11, 76 (crossings 47 /
 * 20 / 10 -> 45 / 14 / 6); at 4 71 / 61 / 13, 78. At 2, 16 kHz: 110 / 115 / 31, 113 -> 108 / 105
 * / 28, 112; ten further draws 51 / 53 / 13, 56 -> 49 / 48 / 12, 53 (16 kHz 45 / 49 / 10, 49 -> 44
 * / 51 / 9, 49). The accuracy matrix: every hop as before; events per call change in one cell.
 * The trend model (trendGate) given the same 2 on top: no better (48 kHz, 22 draws: 67 / 55 / 10
 * -> 70 / 60 / 14). The cost stays at most LAST_CHOICE_COST, so a resting place's gate stays as
 * wide as before (a positive cost is no match); on the matrix (23 draws at 48 and 16 kHz) and the
 * accuracy matrix that made no difference.
 */
const REST_COST = 2;
/**
 * A confirmed track followed for at least STILL_SPAN_S whose lifetime drift (the fitted slope of
 * its bearing over time, direction-sums.ts) is at most STILL_DRIFT_DEG_S is a still caller:
 * coasting longer than REST_AFTER_S it stays at its resting place, with no rate.
 */
const STILL_SPAN_S = 2;
const STILL_DRIFT_DEG_S = 2;
/**
 * On a flat array, where elevation takes no part in the gate's distance, a candidate whose
 * elevation lies more than this many degrees from the track's last supported elevation (or a
 * settled track's home elevation) is still outside its gate: such an array's elevation errs by
 * up to 30 degrees near the horizon, but wind read at 74-88 degrees of elevation, between a
 * chorus' bouts, otherwise kept the chorus track alive at azimuths all round the circle.
 */
const FLAT_ELEVATION_GATE_DEG = 40;
/**
 * A candidate heard alone in its hop whose centre frequency (the analysis' support-weighted
 * centre of the bands that support it) lies more than BAND_APART_OCT octaves from the
 * mean of a track's (once SIGNATURE_HOPS of its lone hops gave one) is outside that track's gate,
 * at its home and at its resting place: a caller in another band is another caller, however near
 * its bearing (a low passer's first calls 5 degrees from a chorus an octave and a half up joined
 * the chorus' track). Per hop a lone source's centre spreads by up to about 0.8 octave (a chorus'
 * harmonics, a sweep). Chosen on the motion matrix (test/bench/motion-matrix.ts, draws 1313,
 * 2027, 77, 4242, 9001): 0.9 and 1.0 octave split callers into many ids (33-48 switches a draw),
 * 2.0 kept five tracks holding two sources on draw 2027, 1.5 two. Taking the centres of hops with
 * several sources too gained wind-blown passes but split a chorus whose call a louder passer's
 * bands left at its lowest partial (test/accuracy/motion-cells.test.ts): 51 switches and 9 tracks
 * holding two sources over the five draws, against 45 and 8 with lone hops only (50 and 14
 * before). Known cost: a talker's vowels and hisses lie more than 1.5 octaves apart, and one
 * talker can get two tracks at one bearing (the accuracy matrix's speech cells: 1.00 -> 1.11 and
 * 1.67 -> 2.11 events per call). Waiting 2 s and widening the gate by 2 of the track's own
 * spreads of centres kept an espeak-ng talker on one track, but let a reed-frog call join the
 * passing bird's track in the demo scene with c 0.03 % off (test/accuracy/demo-scene.test.ts);
 * 1 spread: the talker split again.
 */
const BAND_APART_OCT = 1.5;
/**
 * A settled track whose centres spread by at most NARROW_SPREAD_OCT (standard deviation of the
 * log2 centres of its lone hops: a chorus of one call type) keeps out a candidate more than
 * BAND_APART_NARROW_OCT from its mean: a passer calling near a chorus' home in a band 1.2-1.5
 * octaves from the chorus' lost calls to the chorus' track (motion matrix draw 77, cho01: the
 * passer 79 -> 93 % of its calls on its own track at all three speeds of sound; draw 2718 cho04
 * 82 -> 86 %). A talker's centres spread by 0.5-0.9 octave (the accuracy matrix's speech
 * cells), a chorus' by about 0.2 (draw 55 cho02; 0.5 for the other chorus there, which had taken
 * a passer's calls 6 deg from its home, a case this rule leaves as it was), so a talker keeps
 * BAND_APART_OCT. Motion matrix, 23 draws (sources >= 80 % complete summed / id switches /
 * tracks holding two): choruses 2191 / 46 / 13 -> 2199 / 39 / 8, passes and crossings the same;
 * the accuracy matrix's output identical. The same 1.2 octaves for every settled track:
 * choruses alike, but the speech cells split a talker (events per call of the call family
 * 1.04 -> 1.14); for every track, crossings 1734 / 51 / 15 -> 1725 / 59 / 17.
 */
const BAND_APART_NARROW_OCT = 1.2;
const NARROW_SPREAD_OCT = 0.35;
const SIGNATURE_HOPS = 10;
/**
 * A settled track keeps its own band as well: a candidate heard alone whose centre lies more
 * than max(OWN_BAND_MIN_OCT, OWN_BAND_SPREADS x the standard deviation of the track's lone
 * hops' log2 centres) octaves from their mean is another caller's. Outside the track's home
 * (its gate there) it does not join the track, and may start a track of its own
 * (withinAnyGate); within the home the track takes it only as a last choice (LAST_CHOICE_COST:
 * when no other track gates it), because a chorus' own calls read that far off at their onsets
 * and tails (a pulsed chorus centred at 1.1 kHz read 570-610 Hz as each call faded, draw 11
 * cho01) and where another caller's bands blend into a lone reading (2.6 -> 1.85 kHz, draw 99
 * cho01): kept out at the home too, 23 draws' choruses took 34 -> 49 id switches. A chorus'
 * lone hops spread by 0.02-0.1 octave between such hops, so the fixed BAND_APART_OCT (1.5, a
 * talker's vowels and hisses) and BAND_APART_NARROW_OCT (1.2) let a passer 0.7 octave from a
 * chorus (596 Hz tone against a pulsed 820 Hz one: centres 1.1 and 1.8 kHz) join the chorus'
 * track from its first call, 6 deg beside the home (motion matrix draw 555 cho02 at its three
 * speeds of sound: the chorus' track 79 % pure; test/accuracy/motion-cells.test.ts). Chosen on
 * the motion matrix (test/bench/motion-matrix.ts; choruses of 23 draws, sources under 80 % on
 * their main track / id switches / tracks holding two; cells outside the targets): before 26 /
 * 34 / 11, 28 cells; kept out everywhere, floor 0.4 octave, 28 / 216 / 7 (a chorus' first call
 * gave a spread of 0.02 and its next calls' tails were kept out) and for every track, every
 * family 100 / 320 / 23, 155 cells (from 81 / 72 / 21, 84); kept out of settled tracks
 * everywhere, floor 0.4 23 / 120 / 8, 48 cells, floor 0.6 18 / 49 / 5, 28 cells; off the home
 * alone, floor 0.6, 24 / 39 / 11, 26 cells; as here 18 / 33 / 8, 23 cells (no chorus cell worse;
 * passes and crossings every cell as before: all 81 / 72 / 21, 84 -> 73 / 71 / 18, 79). Ten
 * further draws (333..1414) 56 / 55 / 15, 60 -> 53 / 55 / 15, 57; at 16 kHz (--rate 16000) 23
 * draws 114 / 113 / 39, 117 -> 110 / 115 / 31, 113 (draw 55 cho02: the passer 71 -> 88 % on its
 * own track but 1 -> 5 id switches, its calls on the home going to the chorus' track while its
 * own could not pass through, PASSING_S), ten further 48 / 47 / 10, 49 -> 45 / 49 / 10, 49. The
 * accuracy matrix: identical output.
 * Such a candidate within a home is open to an unsettled track at any time, not only while that
 * one passes through (PASSING_S; candHomeOwn): a passer whose calls sounded on a chorus' home for
 * more than a second had them taken by the chorus' track as its last choice (draw 55 cho02 at its
 * three speeds of sound: the passer 2 id switches, a track holding two; now none, the passer 92
 * -> 96 %). Motion matrix: 48 kHz, 23 draws 73 / 71 / 18, 79 -> 73 / 65 / 15, 76 (only those three
 * cells changed); ten further 53 / 55 / 15, 57 -> 51 / 53 / 13, 56 (a crossing, 777 crs06, whose
 * slow caller had settled: both callers 50 and 69 % -> 92 and 100 %); at 16 kHz the same figures
 * (55 cho02: the passer 88 -> 96 %). The accuracy matrix: identical output. With both rules, the
 * floor (choruses, 48 kHz, 23 draws): 0.5 octave 19 / 31 / 5, 21 cells; 0.6 18 / 27 / 5, 20; 0.8
 * 22 / 30 / 8, 24; the spreads: 3 18 / 25 / 5, 20 (but 16 kHz choruses 30 / 48 / 14 -> 30 / 50 /
 * 14, ten further draws 51 / 53 / 13 -> 50 / 54 / 13: no better than 4), 6 21 / 33 / 8, 23.
 */
const OWN_BAND_SPREADS = 4;
const OWN_BAND_MIN_OCT = 0.6;
/**
 * The innovation variance of azimuth (deg^2) below which ln S no longer lowers an unsettled
 * track's assignment cost (gateAt). A reading's own variance is at least 13.5 deg^2 at the
 * default --bearing-noise (READING_VARIANCE_SCALE x 3^2), so two tracks heard within the last few
 * hops (prediction variances of 1-6 deg^2) differ in ln S by how lately each was heard, and
 * after two callers' bearings crossed, the track that took the last call at the crossing point
 * kept winning the other caller's calls (motion matrix draw 222, crs01: b 73 % complete with 2
 * id switches; test/accuracy/motion-cells.test.ts). A settled track keeps the full ln S: its
 * variance is its home's spread, not how lately it was heard (with the floor for every track, a
 * chorus' track lost calls to a passer's sharp beside its home: 2027 cho04, 1414 cho04).
 * Chosen on the motion matrix (under 80 % complete / id switches / tracks holding two; cells
 * outside the targets), no floor -> this floor: 48 kHz, 23 draws 69 / 53 / 8, 74 -> 65 / 55 /
 * 8, 71 (crossings 43 / 10 / 3 -> 39 / 10 / 2); 16 kHz 105 / 105 / 26, 111 -> 98 / 99 / 22, 105;
 * ten further draws 49 / 48 / 12, 53 -> 47 / 40 / 7, 48, at 16 kHz 42 / 51 / 8, 50 -> 44 / 55 /
 * 11, 53 (1212 crs05: two callers at one point, ids swapped). Summed over the four: 265 / 257 /
 * 54, 288 -> 254 / 249 / 48, 277. The floor for every track, settled too: 48 kHz 65 / 57 / 9,
 * 71, 16 kHz 98 / 97 / 22, 105, ten further draws 47 / 46 / 10, 51, at 16 kHz 44 / 59 / 13, 55;
 * a floor of 30 for every track: 48 kHz 62 / 66 / 10, 71 (choruses 18 / 25 / 5 -> 19 / 35 / 7),
 * and the accuracy matrix's events per call up in two crossing cells (x13t 1.50 -> 1.70, x15t
 * 2.78 -> 3.22). The accuracy matrix with this floor: as before but one speech cell, call12t,
 * 2.11 -> 1.89 events per call.
 */
const AZIMUTH_S_FLOOR_DEG2 = 20;
/** The assignment cost of a candidate a track takes only when no other track can (negative: still a match, assignment.ts). */
const LAST_CHOICE_COST = -1e-3;
/**
 * A hop whose own spectra agree with its answer by less than this many standard deviations of
 * incoherent noise's (the analysis' freshZ) holds only the memory of a call that has ended: for
 * about 0.1-0.2 s after each call the analysis still reports its direction, with confidence up to
 * 0.98 when wind keeps the hop above the detection SNR, while the call itself had fresh
 * coherence of 18-35 (a broadband passer at 50 deg/s, motion matrix draw 77). Fed to the filter,
 * those hops held a mover's track still and took its rate from -16 to -8 deg/s, and its next
 * call fell outside the gate. They support the track (it stays alive, its event open) without
 * moving it. Chosen on five draws of the motion matrix: id switches 45 -> 40 and tracks holding
 * two sources 8 -> 7 at 3; at 5, 45 and 7.
 */
const HELD_Z = 3;
/**
 * The onward model of a young mover (onwardMatch). A fast caller's first call gives its track a
 * rate well below the caller's: the analysis' evidence memory (--memory) holds each call's onset,
 * so within the call the readings trail the caller by a growing margin (a broadband passer at
 * 40-60 deg/s on a 20 cm pair, motion matrix draw 2027 pas13: readings -43 to -40 deg over 0.18 s
 * while the caller went -43 to -36, and the track's rate came out at 12 deg/s), and its next call,
 * 45 deg on, falls beyond the prediction's gate (at most gateSigma x maxUncertaintyDeg, about 30
 * deg): a new track per call. So a newly confirmed track whose candidate lies ahead of a coasting
 * young mover takes that mover's id and history, as it takes a dormant track's: the mover was last
 * moved ONWARD_MIN_GAP_S to REST_AFTER_S ago, its filters started less than ONWARD_SPAN_S before
 * (one call or two: an older filter's rate comes from its calls' onsets and needs no such help,
 * and a crossing caller's onset ghost 25 deg ahead of one took its id; a mover handed on so keeps
 * the filters of its latest call's slot, whose rate is again that call's alone, so each of its
 * calls may be handed on), moving at ONWARD_MIN_RATE_DEG_S or more; the candidate lies on the side
 * it moves towards, at an implied rate (from where it was last moved) of at most ONWARD_RATIO
 * times its rate and at most --max-rate, in the same band (BAND_APART_OCT). Chosen on the motion
 * matrix, ten draws (sources >= 80 % complete summed / id switches / tracks holding two): without
 * the model 841 / 60 / 14; with it 843 / 57 / 13 for any span (held out 2718 86 -> 88 %, 9 -> 7
 * switches), span 1.2 s 843 / 56 / 13; ratio 12 with the rate also set to the implied one 840 / 62
 * / 13. With keptOutOnFlat: ratio 6 and 9 846 / 54 / 13, ratio 4 846 / 56 / 14. The span counted
 * from the track's first sighting instead of its filters' start gave every motion cell the same
 * (at --max-rate 120), but a numpy-rendered caller at 60 or 90 deg/s with five calls lost its id
 * at the fourth (test/accuracy/numpy-mover.test.ts). Accuracy matrix: one cell changes, x15t
 * (clicks in a room on a 4-mic line, 8 % within 5 deg): events per call 2.44 -> 2.89.
 * Ratio 9 since: at 6 the hand-over stood on a knife's edge of the first call's rate. Draw 2027's
 * pas13 rendered at 44.1 kHz instead of 48 gave the track 10.7 deg/s instead of 11.3 (the hops
 * fall differently on the call), 6 x 10.7 fell short of the implied 66.5 deg/s and each call had
 * a track of its own; the numpy caller at 90 deg/s rendered at 44.1 or 22.05 kHz lost its id the
 * same way. With 9: the 13 draws of the motion matrix and every accuracy-matrix cell identical;
 * the passes of six draws (4242 to 1001) rendered at 44.1 kHz 90 -> 92 of 96 sources >= 80 %
 * complete, id switches 9 -> 6 (48 kHz: 93 and 6).
 */
const ONWARD_MIN_GAP_S = 0.2;
const ONWARD_SPAN_S = 1.2;
const ONWARD_MIN_RATE_DEG_S = 5;
const ONWARD_RATIO = 9;
/**
 * The trend model of a mover that has gone quiet (trendGate): a confirmed, unsettled track whose
 * supports that moved it span TREND_SPAN_S or more, with a lifetime drift (the fitted slope of its
 * bearing over time, direction-sums.ts) over STILL_DRIFT_DEG_S, is also gated, from REST_AFTER_S
 * to TREND_MAX_S after it last moved, where that drift carries it from where it was last moved,
 * its uncertainty growing by TREND_WANDER_DEG_S (a third model beside its filter's prediction and
 * its resting place: a track's filter loses its rate as it coasts, and its resting place stays
 * behind). A crossing caller heard under its louder partner for 2-3 s came back outside both of
 * its track's gates and took a stray track's id or a new one (motion matrix draw 2468, crs03). A
 * candidate within a settled track's home (in azimuth) is not taken through it: a passer's track
 * coasting on past the passer's last call took a chorus' call on its way (draw 8080, cho02 at c
 * -2 %). Not on an array whose mirror folds azimuth (a folded bearing does not go on along a
 * line). Ten draws (sources >= 80 % complete summed / id switches / tracks holding two): 895 / 44
 * / 12 without, 897 / 43 / 10 with (crossings 683 / 17 / 8 -> 691 / 14 / 6, their calls on the
 * main track 1649 -> 1676 and on another track of the caller 91 -> 65 of 2181 over 13 draws; held
 * out 9999 83 / 10 / 3 -> 84 / 6 / 1; passes 12 -> 14 switches); for any time after the last move
 * (up to --track-timeout) and settled homes not excepted, 897 / 45 / 11 (the coasting passer's
 * track above); with an uncertainty growing by 3 deg/s, 895 / 45 / 12; asked from 0.8 s after the
 * last move, 895 / 43 / 11; up to 5 s instead of 3, the same as 3; for tracks moved over 1 s
 * instead of 2, 896 / 45 / 11. Accuracy matrix: every hop as before, events per call in 3 cells.
 */
const TREND_SPAN_S = 2;
const TREND_MAX_S = 3;
const TREND_WANDER_DEG_S = 1.5;
/**
 * An alias goes only to a track moved by a candidate of its own within this many seconds
 * (takesAliases). A guard: it changed no cell of the motion matrix's 13 draws, and keeps a quiet
 * track from taking a new caller whose sound fits where the track is predicted
 * (test/track/tracker.test.ts).
 */
const ALIAS_WITHIN_S = 1;
/** Through which model a candidate joins a track: its filter's prediction, its resting place, its trend. */
const BY_PREDICTION = 0;
const AT_REST = 1;
const BY_TREND = 2;
const NO_EVENTS: readonly EventRecord[] = Object.freeze([]);

interface MutableUpdate {
  trackIds: (number | null)[];
  events: readonly EventRecord[];
}

export class Tracker {
  readonly options: Readonly<TrackerOptions>;
  /** How long a settled track lives without a support that moved it: --static-timeout, at least --track-timeout. */
  private readonly settledTimeoutS: number;
  private readonly size: number;
  private readonly nCand: number;
  private readonly sc: HopScratch;
  private readonly az: AngleFilterBank;
  private readonly el: AngleFilterBank;
  private readonly state: Uint8Array;
  private readonly id: Int32Array;
  private readonly hasEl: Uint8Array;
  private readonly hits: Int32Array;
  private readonly age: Int32Array;
  private readonly lastSupportT: Float64Array;
  /** Time of the last support that moved the track's filters (its timeout counts from there). */
  private readonly lastMovedT: Float64Array;
  /** Time of the last support that moved the track and was not an alias (ALIAS_WITHIN_S). */
  private readonly lastOwnT: Float64Array;
  /** Time of the last support by a candidate outside every settled home. */
  private readonly lastFreeT: Float64Array;
  /** When the slot's own filters started: its birth (a track handed to another slot by revive() goes on with that slot's filters and time). */
  private readonly filterT: Float64Array;
  private readonly firstSeenT: Float64Array;
  private readonly hopCount: Float64Array;
  private readonly eventCount: Int32Array;
  private readonly activeS: Float64Array;
  private readonly chosen: Int32Array;
  private readonly lifetime: DirectionSums;
  private readonly cutter: EventCutter;
  private readonly assigner: NearestNeighbourAssigner;
  private readonly listed: Int32Array;
  private readonly listedChoice: Int32Array;
  private readonly cost: Float64Array;
  private readonly candUsable: Uint8Array;
  private readonly candTaken: Uint8Array;
  private readonly candGated: Uint8Array;
  /** Per candidate: 0 for one heard under a louder caller (DirectionCandidate.underLouder), which neither starts nor moves a track. */
  private readonly candFirm: Uint8Array;
  /** Per candidate: the index of the candidate it is an aliased lobe of (DirectionCandidate.aliasOf), else -1. */
  private readonly candAlias: Int32Array;
  /** Per slot: 1 when the track is settled (see above); its home (working angle) and home variance. */
  private readonly settled: Uint8Array;
  /** Per slot, this hop: 1 for a dormant track (DORMANT_SPAN_S; confirmed; cleared when its slot is freed). */
  private readonly dormant: Uint8Array;
  /** Per slot: 1 once the track has settled with a still rate (kept while its spread stays within the noise). */
  private readonly still: Uint8Array;
  private readonly homeAz: Float64Array;
  private readonly homeVar: Float64Array;
  /** Home elevation and its variance (NaN when the track carries no elevations). */
  private readonly homeEl: Float64Array;
  private readonly homeElVar: Float64Array;
  /** Per slot: the resting place (angle and variance at the last support; elevation NaN when none). */
  private readonly restAz: Float64Array;
  private readonly restAzVar: Float64Array;
  private readonly restEl: Float64Array;
  private readonly restElVar: Float64Array;
  /** Per (listed track, candidate): the model whose cost it is (BY_PREDICTION, AT_REST, BY_TREND). */
  private readonly costModel: Uint8Array;
  /** The model of the last costFor(). */
  private lastCostModel = BY_PREDICTION;
  /** Per slot: the model through which this hop's chosen candidate joined it. */
  private readonly chosenModel: Uint8Array;
  /** Per candidate of the hop: 1 when it lies within the home gate of a settled track. */
  private readonly candHome: Uint8Array;
  /** Per candidate: 1 when it lies within the home gate of a settled track and within that track's own band (OWN_BAND_SPREADS). */
  private readonly candHomeOwn: Uint8Array;
  /** The same in azimuth alone (elevation not asked): a support outside every such home is free. */
  private readonly candHomeAz: Uint8Array;
  /** Per candidate of the hop: 1 when another caller's candidate lies within CROWD_DEG of it (markCrowded). */
  private readonly candCrowded: Uint8Array;
  private readonly idsByLength: (number | null)[][] = [];
  private readonly result: MutableUpdate = { trackIds: [], events: NO_EVENTS };
  private readonly finished: TrackSummary[] = [];
  /** Squared Mahalanobis distance of the last gate() call. */
  private readonly d2 = new Float64Array(1);
  /** The cost of the last costInto() call. */
  private readonly costOut = new Float64Array(1);
  /** Per slot, this hop (set by trendOf): where its trend model puts it (azimuth), that azimuth's variance, and the drift. */
  private readonly trendAz: Float64Array;
  private readonly trendVar: Float64Array;
  private readonly trendRate: Float64Array;
  private readonly gate2: number;
  /** ln of the largest innovation variance (max uncertainty plus the noisiest measurement): keeps the cost negative inside the gate. */
  private readonly logSMax: number;
  /** AZIMUTH_S_FLOOR_DEG2, at most exp(logSMax) (options with tiny uncertainties): costs inside the gate stay negative. */
  private readonly sFloor: number;
  /** Centre of the reported half circle when the array's mirror flips azimuth, else null. */
  private readonly sideDeg: number | null;
  /**
   * A flat array (its mirror is up-down): its elevations are reported and followed but take no
   * part in gating, the assignment cost or a home's distance. Its elevation error is large near
   * the horizon (the delays change there as the cosine of elevation), so one chorus read at 7
   * and at 30 degrees of elevation split into two tracks; its azimuth does not have that error.
   */
  private readonly flat: boolean;
  private nextId = 1;
  private started = false;
  private ended = false;

  constructor(options: TrackerSettings = {}) {
    const o = resolveTrackerOptions(options);
    this.options = Object.freeze(o);
    this.settledTimeoutS = Math.max(o.trackTimeoutS, o.staticTimeoutS);
    const n = o.maxTracks;
    const c = o.maxCandidates;
    this.size = n;
    this.nCand = c;
    const filter = {
      rateWanderDegS: o.rateWanderDegS,
      maxRateDegS: o.maxRateDegS,
      rateMemoryS: o.rateMemoryS,
      maxUncertaintyDeg: o.maxUncertaintyDeg,
    };
    this.sc = new HopScratch(c);
    // On an array whose mirror flips azimuth the filters run on the folded offset from the
    // reported half circle's centre ([-90, 90], reflecting at the mirror's axis).
    this.sideDeg = o.mirror?.sideDeg ?? null;
    this.flat = o.mirror?.kind === 'up-down';
    this.az = new AngleFilterBank(n, this.sideDeg !== null ? 'half-circle' : 'circle', filter);
    this.el = new AngleFilterBank(n, 'elevation', filter);
    this.az.io[IO_RATE_SIGMA] = o.initialRateDegS;
    this.el.io[IO_RATE_SIGMA] = o.initialRateDegS;
    this.state = new Uint8Array(n);
    this.id = new Int32Array(n);
    this.hasEl = new Uint8Array(n);
    this.hits = new Int32Array(n);
    this.age = new Int32Array(n);
    this.lastSupportT = new Float64Array(n);
    this.lastMovedT = new Float64Array(n);
    this.lastOwnT = new Float64Array(n);
    this.trendAz = new Float64Array(n);
    this.trendVar = new Float64Array(n);
    this.trendRate = new Float64Array(n);
    this.lastFreeT = new Float64Array(n);
    this.filterT = new Float64Array(n);
    this.firstSeenT = new Float64Array(n);
    this.hopCount = new Float64Array(n);
    this.eventCount = new Int32Array(n);
    this.activeS = new Float64Array(n);
    this.chosen = new Int32Array(n);
    this.lifetime = new DirectionSums(n, o.mirror, this.sc);
    this.cutter = new EventCutter(n, o, this.sc, this.az.rate);
    this.assigner = new NearestNeighbourAssigner(n, c);
    this.listed = new Int32Array(n);
    this.listedChoice = new Int32Array(n);
    this.cost = new Float64Array(n * c);
    this.candUsable = new Uint8Array(c);
    this.candTaken = new Uint8Array(c);
    this.candGated = new Uint8Array(c);
    this.candFirm = new Uint8Array(c);
    this.candAlias = new Int32Array(c);
    this.settled = new Uint8Array(n);
    this.dormant = new Uint8Array(n);
    this.still = new Uint8Array(n);
    this.homeAz = new Float64Array(n);
    this.homeVar = new Float64Array(n);
    this.homeEl = new Float64Array(n);
    this.homeElVar = new Float64Array(n);
    this.restAz = new Float64Array(n);
    this.restAzVar = new Float64Array(n);
    this.restEl = new Float64Array(n);
    this.restElVar = new Float64Array(n);
    this.costModel = new Uint8Array(n * c);
    this.chosenModel = new Uint8Array(n);
    this.candHome = new Uint8Array(c);
    this.candHomeOwn = new Uint8Array(c);
    this.candHomeAz = new Uint8Array(c);
    this.candCrowded = new Uint8Array(c);
    this.gate2 = o.gateSigma * o.gateSigma;
    this.logSMax = Math.log(o.maxUncertaintyDeg * o.maxUncertaintyDeg + (READING_VARIANCE_SCALE * o.bearingNoiseDeg * o.bearingNoiseDeg) / (MIN_SCORE * MIN_COS_ELEVATION * MIN_COS_ELEVATION));
    this.sFloor = Math.min(AZIMUTH_S_FLOOR_DEG2, Math.exp(this.logSMax));
  }

  /** Feed one hop; see TrackUpdate (the returned object is reused by the next call). */
  update(obs: HopObservation): TrackUpdate {
    if (this.ended) throw new RuntimeFailure('tracker: update() after finish(); start a new Tracker for a new stream.');
    const hop = this.sc.hop;
    const t = obs.timeS;
    if (!Number.isFinite(t) || (this.started && t <= hop[TIME]!)) {
      throw new RuntimeFailure(`tracker: hop time ${t} s does not follow ${hop[TIME]} s; hops must arrive in increasing time order.`);
    }
    hop[DT] = this.started ? t - hop[TIME]! : 0;
    if (hop[DT]! > 0) hop[HOP_S] = hop[DT]!;
    this.started = true;
    this.fillHop(obs);
    this.az.io[IO_DT] = hop[DT]!;
    this.el.io[IO_DT] = hop[DT]!;

    for (let s = 0; s < this.size; s++) {
      this.chosen[s] = -1;
      this.chosenModel[s] = BY_PREDICTION;
      this.settled[s] = 0;
      this.dormant[s] = 0;
      if (this.state[s] === FREE) continue;
      const hold = this.hasNeighbour(s) ? 1 : 0;
      this.az.io[IO_HOLD_RATE] = hold;
      this.el.io[IO_HOLD_RATE] = hold;
      this.az.predict(s);
      if (this.hasEl[s] === 1) this.el.predict(s);
      if (this.state[s] === CONFIRMED) this.settle(s);
      if (this.state[s] === CONFIRMED && this.settled[s] === 0 && this.isDormant(s)) this.dormant[s] = 1;
      if (this.state[s] === CONFIRMED && this.settled[s] === 0 && this.stillCaller(s)) this.restartAtRest(s);
      if (this.settled[s] === 1) {
        // A settled track is static: it is predicted at its home, and coasts without drifting or
        // growing a rate (angle-filter.ts holdStatic), so it cannot walk off with a passer.
        const r = this.options.rateWanderDegS;
        this.az.holdStatic(s, this.homeVar[s]!, r * r);
        this.az.pin(s, this.homeAz[s]!);
        if (this.hasEl[s] === 1) {
          this.el.holdStatic(s, this.homeElVar[s]!, r * r);
          // Its elevation too: left to coast, it ran on at the rate a passer's call near the home
          // gave it (a chorus at -6 degrees was predicted at 35 and missed its own next call).
          if (this.homeEl[s] === this.homeEl[s]) this.el.pin(s, this.homeEl[s]!);
        }
      }
    }

    const nC = this.loadCandidates(obs);
    this.resolveAliases(nC);
    this.assignStage(CONFIRMED, nC);
    this.assignStage(TENTATIVE, nC);
    this.applyAssignments();
    let events = this.tentativeBookkeeping(this.births(nC));
    const winnerSlot = this.winnerSlot();
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] === FREE) continue;
      const track = this.state[s] === CONFIRMED ? this.id[s]! : -1;
      const j = this.chosen[s]!;
      const ended = this.cutter.step(s, j, track, this.onsetElsewhere(s, winnerSlot), j >= 0 && this.keepsOnly(j));
      if (ended !== null) events = this.collect(events, s, ended);
      if (this.state[s] === CONFIRMED && hop[TIME]! - this.lastMovedT[s]! > this.timeoutOf(s)) {
        events = this.retire(s, events);
      }
    }

    const ids = this.idsFor(obs.candidates.length);
    for (let i = 0; i < ids.length; i++) ids[i] = null;
    for (let s = 0; s < this.size; s++) {
      const j = this.chosen[s]!;
      if (j >= 0 && this.state[s] === CONFIRMED) ids[j] = this.id[s]!;
    }
    this.result.trackIds = ids;
    this.result.events = events === null ? NO_EVENTS : events;
    return this.result;
  }

  /**
   * Where the analysis should look for callers it may not hear by itself in the next hop
   * (src/analysis/watched-directions.ts): the predictions (azimuth, elevation or NaN) of the
   * confirmed tracks, not dormant, supported within WATCH_WITHIN_S and WATCH_CLEAR_DEG from
   * every other, that no firm candidate supported this hop (an alias does not count: a caller
   * read at a lobe is looked for again on the next hop); with the half-width of each one's gate
   * (degrees). Written to az / el / half (at most their length); returns the count. Arrays
   * whose mirror folds azimuth give none.
   */
  watchList(az: Float64Array, el: Float64Array, half: Float64Array): number {
    if (this.sideDeg !== null || this.ended) return 0;
    const t = this.sc.hop[TIME]!;
    const ahead = this.sc.hop[HOP_S]!;
    let n = 0;
    for (let s = 0; s < this.size && n < az.length; s++) {
      if (this.state[s] !== CONFIRMED || this.dormant[s] === 1 || !(t - this.lastSupportT[s]! <= WATCH_WITHIN_S)) continue;
      const j = this.chosen[s]!;
      if ((j >= 0 && this.candFirm[j] === 1 && this.candAlias[j]! < 0) || this.nearOther(s, WATCH_CLEAR_DEG)) continue;
      az[n] = wrapDeg(this.az.angle[s]! + this.az.rate[s]! * ahead);
      el[n] = this.hasEl[s] === 1 ? this.el.angle[s]! : NaN;
      half[n] = Math.sqrt(this.gate2 * (this.az.variance(s) + this.options.bearingNoiseDeg * this.options.bearingNoiseDeg));
      n++;
    }
    return n;
  }

  /**
   * The confirmed track that took the hop's answer (its first candidate: the analysis' winner,
   * whose sound the hop's onset strength mostly measures, or an alias of it), or -1.
   */
  private winnerSlot(): number {
    for (let s = 0; s < this.size; s++) {
      const j = this.chosen[s]!;
      if (this.state[s] === CONFIRMED && (j === 0 || (j > 0 && this.candAlias[j] === 0))) return s;
    }
    return -1;
  }

  /**
   * Each alias (a candidate at a watched track's prediction that the hop's sound fits as well as
   * the candidate it is an alias of: src/analysis/watched-directions.ts) against that candidate:
   * when a confirmed track other than the one that would take the alias (aliasTaker; only one
   * that takesAliases can) could take the other (takenByConfirmed), the hop is that track's and
   * the alias is dropped; else, when a track could take the alias, it keeps the one of the two
   * that costs it less (its nearer reading: the other is the lobe, which starts no track and
   * feeds none); else the alias is dropped. A high sweep passing a 20 cm square at up to 80
   * deg/s, read at a lobe for whole calls, started a track per lobe (motion matrix pas15); a
   * lobe 22 deg from the passer's prediction, inside its gate, took the passer's track away from
   * the alias 14 deg from it while the alias was dropped whenever the track could take the lobe
   * (draw 1313; the figures with the wider test for aliases at watched-directions.ts,
   * ALIAS_MAX_HALF_DEG).
   */
  private resolveAliases(nC: number): void {
    for (let j = 0; j < nC; j++) {
      const k = this.candAlias[j]!;
      if (k < 0 || this.candUsable[j] === 0) continue;
      const s = this.aliasTaker(j);
      if (this.takenByConfirmed(k, s)) this.candUsable[j] = 0;
      else if (s < 0) this.candUsable[j] = 0;
      else {
        if (this.confirmedCost(s, k) <= this.confirmedCost(s, j)) this.candUsable[j] = 0;
        else this.candUsable[k] = 0;
      }
    }
  }

  /**
   * Confirmed slot s was moved by a candidate of its own (not an alias) within ALIAS_WITHIN_S: an
   * alias bridges its caller's calls read at a lobe, but cannot keep a track alive by itself
   * (another caller's sound that also fits where the track is predicted would carry it on).
   */
  private takesAliases(s: number): boolean {
    return this.state[s] === CONFIRMED && this.sc.hop[TIME]! - this.lastOwnT[s]! <= ALIAS_WITHIN_S;
  }

  /** The cost of candidate j for confirmed slot s outside the assignment (costFor, with the slot's trend model when it is not settled). */
  private confirmedCost(s: number, j: number): number {
    return this.costFor(s, j, CONFIRMED, this.settled[s] === 0 && this.trendOf(s));
  }

  /** The confirmed track that could take alias j at the least cost, or -1. */
  private aliasTaker(j: number): number {
    let best = -1;
    let bestCost = Infinity;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== CONFIRMED) continue;
      const c = this.confirmedCost(s, j);
      if (c < bestCost) {
        bestCost = c;
        best = s;
      }
    }
    return best;
  }

  /** Could a confirmed track (other than slot `except`) take candidate j this hop (costFor: the assignment's own rules and gates)? */
  private takenByConfirmed(j: number, except = -1): boolean {
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== CONFIRMED || s === except) continue;
      if (this.confirmedCost(s, j) < Infinity) return true;
    }
    return false;
  }

  /**
   * Slot s's candidate this hop was heard only under a louder caller whose track took the hop's
   * answer: the hop's onset is that caller's (event-cutter.ts: it splits no event). A caller that
   * starts beside a louder one comes as a firm candidate, or none while the louder one's onset
   * fills the hop, and its onset still splits its track's event (two callers calling in turn
   * 0.1 s apart on a pair: test/track/tracker.test.ts).
   */
  private onsetElsewhere(s: number, winnerSlot: number): boolean {
    const j = this.chosen[s]!;
    return winnerSlot >= 0 && winnerSlot !== s && j >= 0 && this.candFirm[j] === 0;
  }

  /** Another confirmed track lies within deg of slot s's azimuth. */
  private nearOther(s: number, deg: number): boolean {
    for (let o = 0; o < this.size; o++) {
      if (o === s || this.state[o] !== CONFIRMED) continue;
      if (Math.abs(wrapDeg(this.az.angle[o]! - this.az.angle[s]!)) <= deg) return true;
    }
    return false;
  }

  /** Events of confirmed tracks dropped as shorter than --min-event (tracking-session.ts: a stream of such calls alone gets a warning). */
  tooShortCount(): number {
    return this.cutter.tooShortCount();
  }

  /** Events left out so far as read straight overhead on a flat array (EventCutter.overheadCount). */
  overheadCount(): number {
    return this.cutter.overheadCount();
  }

  /** End of stream: close every open event of a confirmed track and return those events. */
  finish(): EventRecord[] {
    if (this.ended) return [];
    this.ended = true;
    let events: EventRecord[] | null = null;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== CONFIRMED) continue;
      const ended = this.cutter.close(s, this.id[s]!);
      if (ended !== null) events = this.collect(events, s, ended);
    }
    return events ?? [];
  }

  /** One entry per confirmed track so far (dead and alive), by track id. */
  summary(): TrackSummary[] {
    const out = this.finished.slice();
    for (let s = 0; s < this.size; s++) if (this.state[s] === CONFIRMED) out.push(this.summarise(s, !this.ended));
    out.sort((a, b) => a.track - b.track);
    return out;
  }

  private fillHop(obs: HopObservation): void {
    const hop = this.sc.hop;
    hop[TIME] = obs.timeS;
    hop[LEVEL] = Number.isFinite(obs.levelDbfs) ? obs.levelDbfs : -Infinity;
    hop[SNR] = Number.isFinite(obs.snrDb) ? obs.snrDb : 0;
    hop[FRESH_Z] = obs.freshZ !== undefined && obs.freshZ === obs.freshZ ? obs.freshZ : Infinity;
    hop[ONSET] = Number.isFinite(obs.onset) ? obs.onset : 0;
    hop[CONFIDENCE] = Number.isFinite(obs.confidence) ? obs.confidence : 0;
    const band = obs.bandHz;
    hop[BAND_LO] = band ? band[0] : NaN;
    hop[BAND_HI] = band ? band[1] : NaN;
  }

  /**
   * Another confirmed track lies within the gate of slot s's angle (both uncertainties and
   * twice the bearing noise): the two may cross, and their rates must not wander (angle-filter.ts).
   */
  private hasNeighbour(s: number): boolean {
    if (this.state[s] !== CONFIRMED) return false;
    const r = this.options.bearingNoiseDeg;
    for (let o = 0; o < this.size; o++) {
      if (o === s || this.state[o] !== CONFIRMED) continue;
      const d = this.sideDeg === null ? wrapDeg(this.az.angle[o]! - this.az.angle[s]!) : this.az.angle[o]! - this.az.angle[s]!;
      if (d * d <= this.gate2 * (this.az.variance(s) + this.az.variance(o) + 2 * r * r)) return true;
    }
    return false;
  }

  /** Copy the usable candidates into the scratch arrays; returns how many are considered. */
  private loadCandidates(obs: HopObservation): number {
    const o = this.options;
    const sc = this.sc;
    const conf = sc.hop[CONFIDENCE]!;
    const nC = Math.min(obs.candidates.length, this.nCand);
    const loneLogHz = soleCallerLogHz(obs.candidates);
    for (let j = 0; j < nC; j++) {
      const c = obs.candidates[j]!;
      const az = c.azimuthDeg;
      const el = c.elevationDeg;
      const usable =
        Number.isFinite(az) &&
        Number.isFinite(c.score) &&
        conf * c.score >= o.minConfidence &&
        sc.hop[SNR]! >= o.eventLeaveSnrDb &&
        (el === null || Number.isFinite(el));
      this.candUsable[j] = usable ? 1 : 0;
      this.candTaken[j] = 0;
      this.candGated[j] = 0;
      this.candHome[j] = 0;
      this.candHomeOwn[j] = 0;
      this.candHomeAz[j] = 0;
      if (!usable) continue;
      sc.candAz[j] = this.sideDeg === null ? az : foldedOffsetDeg(az, this.sideDeg);
      sc.candEl[j] = el === null ? NaN : el;
      sc.candScore[j] = c.score;
      this.candFirm[j] = c.underLouder === true ? 0 : 1;
      const caller = callerOf(obs.candidates, j);
      this.candAlias[j] = caller !== j && caller < nC ? caller : -1;
      sc.candLogHz[j] = loneLogHz;
      sc.candR[j] = (o.bearingNoiseDeg * o.bearingNoiseDeg) / Math.min(1, Math.max(MIN_SCORE, conf * c.score));
      for (let s = 0; s < this.size; s++) {
        if (this.settled[s] === 0 || this.otherBand(s, j)) continue;
        if (this.homeDistance2(s, j) <= this.gate2) {
          this.candHome[j] = 1;
          if (!this.outsideOwnBand(s, j)) this.candHomeOwn[j] = 1;
        }
        if (this.homeAzimuthDistance2(s, j) <= this.gate2) this.candHomeAz[j] = 1;
      }
    }
    this.markCrowded(nC);
    return nC;
  }

  /**
   * Mark the candidates with another within CROWD_DEG (candCrowded): usable, neither an alias
   * (the same sound) nor within a settled track's home, both of them.
   */
  private markCrowded(nC: number): void {
    const az = this.sc.candAz;
    for (let j = 0; j < nC; j++) {
      this.candCrowded[j] = 0;
      if (!this.crowdable(j)) continue;
      for (let k = 0; k < nC; k++) {
        if (k !== j && this.crowdable(k) && Math.abs(wrapDeg(az[k]! - az[j]!)) <= CROWD_DEG) {
          this.candCrowded[j] = 1;
          break;
        }
      }
    }
  }

  private crowdable(j: number): boolean {
    return this.candUsable[j] === 1 && this.candAlias[j]! < 0 && this.candHome[j] === 0;
  }

  /**
   * Load candidate j as the measurement of slot s into the filter banks (azimuth noise widened
   * by 1 / cos^2 elevation when both carry elevations). Returns whether elevation takes part.
   */
  private loadMeasurement(s: number, j: number): boolean {
    const sc = this.sc;
    const el = sc.candEl[j]!;
    this.az.io[IO_Z] = sc.candAz[j]!;
    if (this.hasEl[s] === 1 && el === el) {
      const cosEl = Math.max(MIN_COS_ELEVATION, Math.cos(this.el.angle[s]! * DEG));
      this.az.io[IO_R] = this.azimuthVariance(j) / (cosEl * cosEl);
      this.el.io[IO_Z] = el;
      this.el.io[IO_R] = sc.candR[j]!;
      return true;
    }
    this.az.io[IO_R] = this.azimuthVariance(j);
    return false;
  }

  /** Candidate j's azimuth measurement variance (READING_VARIANCE_SCALE x its reading variance). */
  private azimuthVariance(j: number): number {
    return READING_VARIANCE_SCALE * this.sc.candR[j]!;
  }

  /**
   * Is candidate j inside the gate of slot s? Leaves the assignment cost in d2[0]:
   * d^2 - gate^2 per angle plus ln S - ln S_max of the azimuth's (S the innovation variance),
   * i.e. the negative log-likelihood of the candidate under the track, shifted to stay negative
   * inside the gate (common practice in nearest-neighbour association, no source). Without the
   * ln S term a vague track (coasting for seconds) is the cheaper home for a candidate that a
   * sharp track predicts well, and a chorus or a crossing partner took the other caller's calls.
   * The elevation's ln S is left out: callers heard together mostly sit at one height, where
   * the elevation tells them apart by nothing but how lately each track was heard. Two callers
   * at one height crossing slowly on a tetrahedron (motion matrix draw 2718, crs03): after the
   * crossing a read 1.7 deg from its own track's prediction (coasting 1.1 s) and 3.6 deg from b's,
   * but the coasting track's elevation variance (11 against 1.2 deg^2) cost it 0.5 more and b's
   * track took a's calls (a 44 % complete, b 59 %, both tracks holding both; now 92 and 100 %,
   * pure; test/accuracy/motion-cells.test.ts). Motion matrix (test/bench/motion-matrix.ts; under
   * 80 % complete / id switches / tracks holding two; cells outside the targets), 48 kHz, 23
   * draws: 71 / 57 / 11, 76 -> 69 / 53 / 8, 74 (seven crossing cells changed, all better; choruses
   * and passes every cell as before); at 16 kHz 108 / 105 / 28, 112 -> 105 / 105 / 26, 111 (six
   * crossing cells better; 4711 crs06, two low callers at one point, and a pass's first hop on a
   * ghost track of vague elevation, 555 pas05, worse); ten further draws 49 / 48 / 12, 53 the same,
   * at 16 kHz 44 / 51 / 9, 49 -> 42 / 51 / 8, 50. The accuracy matrix: identical output. The
   * elevation's ln S counted only above 30 deg^2 (a ghost of vague elevation still pays): 48 kHz
   * 69 / 55 / 9, 75, 16 kHz 106 / 103 / 26, 111, no better.
   * For an unsettled track the azimuth's S counts from AZIMUTH_S_FLOOR_DEG2 up: below it (a track
   * heard within the last few hops) it says which track was heard last more than how well each
   * predicts.
   */
  private gate(s: number, j: number, elevationRule = true): boolean {
    const both = this.loadMeasurement(s, j);
    if (elevationRule && both && this.flat && this.keptOutOnFlat(s, j)) return false;
    return this.gateAt(j, this.az.angle[s]!, this.az.variance(s), this.el.angle[s]!, this.el.variance(s), both && !this.flat, this.settled[s] === 1 ? 0 : this.sFloor);
  }

  /**
   * The gate and cost of gate() for candidate j (its measurement loaded by loadMeasurement)
   * against a track state: azimuth and its variance, elevation and its variance (taking part when
   * withEl), and the floor of the azimuth's innovation variance in ln S (sFloor: 0 for a settled
   * track, this.sFloor for any other).
   */
  private gateAt(j: number, az: number, azVar: number, el: number, elVar: number, withEl: boolean, sFloor: number): boolean {
    const nu = this.azimuthOffset(j, az);
    const sAz = azVar + this.az.io[IO_R]!;
    let d2 = (nu * nu) / sAz;
    let g = this.gate2;
    if (withEl) {
      const dEl = this.sc.candEl[j]! - el;
      d2 += (dEl * dEl) / (elVar + this.el.io[IO_R]!);
      g *= 2;
    }
    this.d2[0] = d2 - g + Math.log(Math.max(sAz, sFloor)) - this.logSMax;
    return d2 <= g;
  }

  /**
   * Is slot s a track of a caller high overhead? Asked of its lifetime mean elevation, not its
   * prediction: a coasting track's elevation runs on at its last rate (a chorus read at 8 to
   * 15 degrees coasted to 60 in three quiet seconds, then took wind read at the zenith, which
   * dragged its azimuth round the circle and its chorus got a second track on calling again).
   */
  private nearZenith(s: number): boolean {
    const el = this.lifetime.meanElevationDeg(s);
    return el !== null && Math.abs(el) > NEAR_ZENITH_TRACK_DEG;
  }

  /**
   * Is candidate j inside the gate of slot s's resting place? Leaves the cost in d2[0], in the
   * form of gate()'s. The caller asks it of confirmed, unsettled tracks only (a settled track
   * has its home instead), and only after REST_AFTER_S without support.
   */
  private restGate(s: number, j: number): boolean {
    if (!(this.sc.hop[TIME]! - this.lastSupportT[s]! >= REST_AFTER_S)) return false;
    const grow2 = this.restGrowth2(s);
    const cap = this.options.maxUncertaintyDeg * this.options.maxUncertaintyDeg;
    return this.gateAtPlace(s, j, this.restAz[s]!, Math.min(this.restAzVar[s]! + grow2, cap), this.restEl[s]!, Math.min(this.restElVar[s]! + grow2, cap));
  }

  /**
   * The gate of gate() for candidate j against slot s placed elsewhere than its filter's
   * prediction (its resting place, its trend): azimuth and variance, elevation (NaN when the
   * place has none) and variance, with the flat-array rule. Leaves the cost in d2[0].
   */
  private gateAtPlace(s: number, j: number, az: number, azVar: number, el: number, elVar: number): boolean {
    const both = this.loadMeasurement(s, j);
    if (both && this.flat && this.keptOutOnFlat(s, j)) return false;
    return this.gateAt(j, az, azVar, el, elVar, both && !this.flat && el === el, this.sFloor);
  }

  /** How much the resting place's variance has grown since slot s's last support (REST_DRIFT_DEG_S), degrees squared. */
  private restGrowth2(s: number): number {
    const grow = REST_DRIFT_DEG_S * (this.sc.hop[TIME]! - this.lastSupportT[s]!);
    return grow * grow;
  }

  /**
   * Does candidate j sound in another band than slot s's calls (its centre frequency more than
   * BAND_APART_OCT from the mean of the slot's, once SIGNATURE_HOPS hops have given one;
   * BAND_APART_NARROW_OCT for a settled slot of narrow centres)?
   */
  private otherBand(s: number, j: number): boolean {
    const off = this.centreOffsetOct(s, j);
    if (off !== off) return false;
    const narrow = this.settled[s] === 1 && this.lifetime.spreadLogHz(s) <= NARROW_SPREAD_OCT;
    return off > (narrow ? BAND_APART_NARROW_OCT : BAND_APART_OCT);
  }

  /**
   * Octaves between candidate j's centre and the mean of slot s's (SIGNATURE_HOPS); NaN when
   * either has none (a candidate of a hop with several sources carries none).
   */
  private centreOffsetOct(s: number, j: number): number {
    return Math.abs(this.sc.candLogHz[j]! - this.lifetime.meanLogHz(s, SIGNATURE_HOPS));
  }

  /**
   * Does candidate j (heard alone, with a centre) lie outside settled slot s's own band: more
   * than max(OWN_BAND_MIN_OCT, OWN_BAND_SPREADS x the spread of the slot's centres) octaves from
   * their mean (see OWN_BAND_SPREADS)?
   */
  private outsideOwnBand(s: number, j: number): boolean {
    if (this.settled[s] === 0) return false;
    const off = this.centreOffsetOct(s, j);
    return off === off && off > Math.max(OWN_BAND_MIN_OCT, OWN_BAND_SPREADS * this.lifetime.spreadLogHz(s));
  }

  /** ... and outside its home's gate too: then it is not slot s's at all (OWN_BAND_SPREADS; costInto asks the two tests itself). */
  private strangerOffHome(s: number, j: number): boolean {
    return this.settled[s] === 1 && this.homeDistance2(s, j) > this.gate2 && this.outsideOwnBand(s, j);
  }

  /**
   * On a flat array, is candidate j outside slot s's gate for its elevation alone? When it reads
   * more than FLAT_ELEVATION_GATE_DEG above the track's last supported elevation (wind, and an
   * aliased lobe of a call, read high), or that far below a track near the zenith; one that far
   * below any other track is in (the track was born of such a lobe at a call's onset: a sweep at
   * 3-4 kHz on a 20 cm square started a track at 102 deg and 58 deg up, and the call itself, read
   * at 97 deg and 17 deg up with confidence 0.98 for 0.15 s, could neither join that track nor
   * start one of its own, withinAnyGate). Motion matrix, ten draws (sources >= 80 % complete
   * summed / id switches / tracks holding two): kept out both ways 843 / 56 / 13, as here 846 /
   * 54 / 13 (choruses' passers 903 -> 909, their switches 18 -> 12). Asked at the prediction
   * (gate) and at the resting place (restGate); the resting place's gate one-sided as well changed
   * no cell of 13 draws (and no accuracy matrix output).
   * A further source of its hop (any candidate but the hop's first) within a settled track's home
   * in azimuth is never kept out by its elevation: read beside a louder caller from the few bins it
   * holds, a second caller's elevation errs far more than a lone one's. A chorus settled at -127
   * deg and 10-20 deg up, calling under the other chorus, read at -126 deg and 73-75 deg up for
   * five hops; kept out of its own track, it fed a track born of stray readings high up (motion
   * matrix draw 55 cho01: two id switches at both speeds of sound, none with this rule). Over 23
   * draws choruses' id switches 38 -> 34, every other figure the same; ten further draws and the
   * accuracy matrix unchanged. For the hop's first candidate too: 38 -> 32, but wind read 72-77
   * deg up between a chorus' bouts fed the chorus track whenever its azimuth wandered through the
   * home (test/track/tracker.test.ts).
   */
  private keptOutOnFlat(s: number, j: number): boolean {
    if (j > 0 && this.settled[s] === 1 && this.homeAzimuthDistance2(s, j) <= this.gate2) return false;
    return this.sc.candEl[j]! - this.restEl[s]! > FLAT_ELEVATION_GATE_DEG || (this.nearZenith(s) && this.belowOnFlat(s, j));
  }

  /** On a flat array: is candidate j's elevation beyond FLAT_ELEVATION_GATE_DEG of elevation ref (false when either is missing)? */
  private farInElevation(j: number, ref: number): boolean {
    return Math.abs(this.sc.candEl[j]! - ref) > FLAT_ELEVATION_GATE_DEG;
  }

  /** Is slot s a still caller (STILL_SPAN_S, STILL_DRIFT_DEG_S) that has gone REST_AFTER_S without support? */
  private stillCaller(s: number): boolean {
    const idle = this.sc.hop[TIME]! - this.lastSupportT[s]!;
    if (!(idle >= REST_AFTER_S) || this.lastSupportT[s]! - this.firstSeenT[s]! < STILL_SPAN_S) return false;
    return Math.abs(this.lifetime.driftDegS(s)) <= STILL_DRIFT_DEG_S;
  }

  /**
   * Where slot s's trend model (TREND_SPAN_S) puts it this hop, into trendAz / trendVar /
   * trendRate (working angle, its variance, the drift); false when the model does not apply.
   */
  private trendOf(s: number): boolean {
    if (this.sideDeg !== null) return false;
    const dt = this.sc.hop[TIME]! - this.lastMovedT[s]!;
    if (!(dt >= REST_AFTER_S && dt <= TREND_MAX_S) || this.lastMovedT[s]! - this.firstSeenT[s]! < TREND_SPAN_S) return false;
    const drift = this.lifetime.driftDegS(s);
    if (!(Math.abs(drift) > STILL_DRIFT_DEG_S)) return false;
    const grow = TREND_WANDER_DEG_S * dt;
    this.trendAz[s] = wrapDeg(this.restAz[s]! + drift * dt);
    this.trendVar[s] = this.restAzVar[s]! + grow * grow;
    this.trendRate[s] = drift;
    return true;
  }

  /**
   * Is candidate j inside slot s's trend gate (azimuth alone; trendOf(s) has put the trend in
   * place this hop)? Leaves the cost in d2[0], as gate().
   */
  private trendGate(s: number, j: number): boolean {
    return this.candHomeAz[j] === 0 && this.gateAtPlace(s, j, this.trendAz[s]!, this.trendVar[s]!, NaN, 0);
  }

  /** Put slot s where its trend model has it this hop (trendOf), moving at its drift (that model won the hop), before its update. */
  private restartAtTrend(s: number): void {
    this.az.restart(s, this.trendAz[s]!, this.trendVar[s]!);
    this.az.rate[s] = this.trendRate[s]!;
  }

  /** Put slot s back at its resting place (its still model won the hop) before its update. */
  private restartAtRest(s: number): void {
    const grow2 = this.restGrowth2(s);
    this.az.restart(s, this.restAz[s]!, this.restAzVar[s]! + grow2);
    if (this.hasEl[s] === 1 && this.restEl[s] === this.restEl[s]) this.el.restart(s, this.restEl[s]!, this.restElVar[s]! + grow2);
  }

  /** How long confirmed slot s may go without a support that moved it (a settled track: --static-timeout). */
  private timeoutOf(s: number): number {
    return this.settled[s] === 1 ? this.settledTimeoutS : this.options.trackTimeoutS;
  }

  /** Is confirmed, unsettled slot s dormant (DORMANT_SPAN_S)? */
  private isDormant(s: number): boolean {
    return this.eventCount[s]! <= DORMANT_EVENTS && this.lastMovedT[s]! - this.firstSeenT[s]! < DORMANT_SPAN_S && this.sc.hop[TIME]! - this.lastMovedT[s]! > DORMANT_AFTER_S;
  }

  /** Is slot s a settled track? If so, note its home. */
  private settle(s: number): void {
    if (this.lastSupportT[s]! - this.firstSeenT[s]! < SETTLED_SPAN_S) return;
    const spread = this.lifetime.spreadDeg(s);
    if (!(spread <= this.options.bearingNoiseDeg)) {
      this.still[s] = 0;
      return;
    }
    // Becoming settled needs a still rate and drift; once settled, a passer's call taken near the
    // home (which gives the filter a rate) does not unsettle it: only a spread beyond the noise does.
    const steady = Math.abs(this.az.rate[s]!) <= SETTLED_MAX_RATE_DEG_S && Math.abs(this.lifetime.driftDegS(s)) <= SETTLED_MAX_RATE_DEG_S;
    if (this.still[s] === 0 && !steady) return;
    this.still[s] = 1;
    this.settled[s] = 1;
    this.homeAz[s] = this.lifetime.meanWorkingDeg(s);
    const sd = Math.max(spread, HOME_MIN_SD_DEG);
    this.homeVar[s] = sd * sd;
    const el = this.lifetime.meanElevationDeg(s);
    this.homeEl[s] = el ?? NaN;
    const elSd = Math.max(this.lifetime.elevationSpreadDeg(s), HOME_MIN_EL_SD_DEG);
    this.homeElVar[s] = elSd * elSd;
  }

  /**
   * Is candidate j more than SETTLED_REACH_DEG in azimuth from the home of settled slot s? Such a
   * candidate may not join it through its ordinary gate (it still may through its home's).
   */
  private beyondReach(s: number, j: number): boolean {
    return this.settled[s] === 1 && Math.abs(this.azimuthOffset(j, this.homeAz[s]!)) > SETTLED_REACH_DEG;
  }

  /** Candidate j's azimuth minus az, degrees (wrapped, unless the array folds azimuth to a side). */
  private azimuthOffset(j: number, az: number): number {
    const d = this.sc.candAz[j]! - az;
    return this.sideDeg === null ? wrapDeg(d) : d;
  }

  /**
   * Squared distance of candidate j from the home of settled slot s over the home's variance,
   * per angle: the larger of azimuth and elevation (when both carry elevations; azimuth alone on a flat array).
   */
  private homeDistance2(s: number, j: number): number {
    const d2 = this.homeAzimuthDistance2(s, j);
    if (this.flat) return this.farInElevation(j, this.homeEl[s]!) ? Infinity : d2;
    const dEl = this.sc.candEl[j]! - this.homeEl[s]!;
    return dEl === dEl ? Math.max(d2, (dEl * dEl) / this.homeElVar[s]!) : d2;
  }

  private homeAzimuthDistance2(s: number, j: number): number {
    const nu = this.azimuthOffset(j, this.homeAz[s]!);
    return (nu * nu) / this.homeVar[s]!;
  }

  /** Global nearest neighbour between the tracks in one state and the untaken candidates. */
  private assignStage(which: number, nC: number): void {
    let nT = 0;
    for (let s = 0; s < this.size; s++) if (this.state[s] === which) this.listed[nT++] = s;
    if (nT === 0 || nC === 0) return;
    const stride = this.nCand;
    let any = false;
    for (let i = 0; i < nT; i++) {
      const s = this.listed[i]!;
      // The trend is the slot's, whatever the candidate: worked out once (trendAz / trendVar / trendRate).
      const trend = which === CONFIRMED && this.settled[s] === 0 && this.trendOf(s);
      for (let j = 0; j < nC; j++) {
        this.costInto(s, j, which, trend);
        this.cost[i * stride + j] = this.costOut[0]!;
        this.costModel[i * stride + j] = this.lastCostModel;
        if (this.costOut[0]! < Infinity) {
          this.candGated[j] = 1;
          any = true;
        }
      }
    }
    if (!any) return;
    this.assigner.solve(nT, nC, this.cost, this.listedChoice);
    for (let i = 0; i < nT; i++) {
      const j = this.listedChoice[i]!;
      if (j < 0) continue;
      this.chosen[this.listed[i]!] = j;
      this.chosenModel[this.listed[i]!] = this.costModel[i * stride + j]!;
      this.candTaken[j] = 1;
    }
  }

  /**
   * The cost of candidate j for slot s (a track in state `which`; `trend`: trendOf(s) holds this
   * hop), the cheapest of its models (prediction within reach, resting place, trend, settled
   * home), with that model in lastCostModel; Infinity when no model gates it or a rule keeps it out.
   */
  private costFor(s: number, j: number, which: number, trend: boolean): number {
    this.costInto(s, j, which, trend);
    return this.costOut[0]!;
  }

  /**
   * costFor's work, its result left in costOut[0]: a number returned from a call the engine does
   * not inline is allocated, one left in a typed array is not (the hot path, assignStage, calls this).
   */
  private costInto(s: number, j: number, which: number, trend: boolean): void {
    this.lastCostModel = BY_PREDICTION;
    const out = this.costOut;
    out[0] = Infinity;
    if (this.candUsable[j] === 0 || this.candTaken[j] === 1 || this.dormant[s] === 1 || this.otherBand(s, j)) return;
    // One heard only under a louder caller does not confirm a track either; an alias goes only to a confirmed track that takes aliases.
    if (which !== CONFIRMED && this.candFirm[j] === 0) return;
    if (this.candAlias[j]! >= 0 && (which !== CONFIRMED || !this.takesAliases(s))) return;
    if (this.candHomeOwn[j] === 1 && this.settled[s] === 0 && !this.passingThrough(s)) return;
    if (Math.abs(this.sc.candEl[j]!) > ZENITH_DEG && !this.nearZenith(s)) return;
    // A settled slot's home distance and own band, asked once here (strangerOffHome's test).
    const settled = this.settled[s] === 1;
    const homeD2 = settled ? this.homeDistance2(s, j) : Infinity;
    const ownOut = settled && this.outsideOwnBand(s, j);
    let cost = Infinity;
    if (!this.beyondReach(s, j) && !(ownOut && homeD2 > this.gate2) && this.gate(s, j)) cost = this.d2[0]!;
    if (which === CONFIRMED && !settled && this.restGate(s, j) && this.d2[0]! + REST_COST < cost) {
      // still a match inside the gate (a positive cost is none: assignment.ts)
      cost = Math.min(this.d2[0]! + REST_COST, LAST_CHOICE_COST);
      this.lastCostModel = AT_REST;
    }
    if (trend && this.trendGate(s, j) && this.d2[0]! < cost) {
      cost = this.d2[0]!;
      this.lastCostModel = BY_TREND;
    }
    if (settled) {
      if (homeD2 <= this.gate2 && homeD2 - this.gate2 < cost) cost = homeD2 - this.gate2;
      // Outside its own band: the track's only when no other track can take it.
      if (cost < Infinity && ownOut) cost = LAST_CHOICE_COST;
    }
    out[0] = cost;
  }

  /**
   * Was unsettled slot s supported outside every home recently enough to take a candidate in a
   * settled home (PASSING_S; PASSING_MOVER_S while it moves at PASSING_RATE_DEG_S or faster)?
   */
  private passingThrough(s: number): boolean {
    const within = Math.abs(this.az.rate[s]!) >= PASSING_RATE_DEG_S ? PASSING_MOVER_S : PASSING_S;
    return this.sc.hop[TIME]! - this.lastFreeT[s]! <= within;
  }

  private applyAssignments(): void {
    for (let s = 0; s < this.size; s++) {
      const j = this.chosen[s]!;
      if (j < 0) continue;
      const sc = this.sc;
      if (this.chosenModel[s] === AT_REST) this.restartAtRest(s);
      else if (this.chosenModel[s] === BY_TREND) this.restartAtTrend(s);
      // One heard only under a louder caller (underLouder) supports its track, never moves it.
      const firm = this.candFirm[j] === 1;
      let moved = firm;
      if (firm && sc.candEl[j] === sc.candEl[j] && this.hasEl[s] === 0) {
        // First elevation for this track: start its elevation filter.
        this.hasEl[s] = 1;
        this.el.io[IO_Z] = sc.candEl[j]!;
        this.el.io[IO_R] = sc.candR[j]!;
        this.el.init(s);
        this.loadMeasurement(s, j);
        this.az.update(s);
      } else if (firm && !this.keepsOnly(j)) {
        const both = this.loadMeasurement(s, j);
        // Only the update widens for a crowded reading: its gate and cost kept the plain variance.
        const widen = this.candCrowded[j] === 1 ? CROWD_NOISE : 1;
        this.az.io[IO_R] = this.az.io[IO_R]! * widen;
        if (both) {
          this.el.io[IO_R] = this.el.io[IO_R]! * widen;
          this.el.update(s);
        }
        this.az.update(s);
      } else {
        // A direction the hop's own spectra do not support (the analysis' memory of a call that
        // has ended), or one less sure than an event's start asks, keeps the track alive and its event
        // open, but does not move it.
        moved = false;
      }
      this.support(s, j, moved);
    }
  }

  /**
   * Candidate j is firm (not heard only under a louder caller, which moves no track but gives its
   * event its direction) and keeps its track alive and its event open but neither moves the track
   * nor sets the event's direction (event-cutter.ts): the hop's own spectra do not support it
   * (HELD_Z: the analysis' memory of a call that has ended) or it is less sure than an event's
   * start asks.
   */
  private keepsOnly(j: number): boolean {
    return this.candFirm[j] === 1 && (this.sc.hop[FRESH_Z]! < HELD_Z || this.tooWeakToMove(j));
  }

  /**
   * Candidate j is less sure than an event's start asks (hop confidence x score below the
   * event-enter confidence). Such hops between a mover's calls (low, weakly coherent sound such as
   * wind on a small array: 5-11 dB, confidence 0.25-0.65, motion matrix draw 8080, cho01) walked a
   * passer's track 15 deg away and turned its rate from +20 to -30 deg/s, and its next call
   * started a new track. The rule first asked for the hop to be below the event-enter SNR as well
   * (below both levels); but gusts lift the hops between calls over that SNR: a broadband passer
   * at 80 deg/s on a 20 cm pair in wind (draw 4242, pas13) was followed through a 0.25 s gap by
   * hops of 9-15 dB and confidence 0.19-0.31 reading where its last call ended, which turned the
   * track's rate from +38 to -21 deg/s, and its next call, 32 deg on, started a new track.
   * Motion matrix, ten draws (sources >= 80 % complete, in per cent, summed / id switches / tracks
   * holding two): below both levels 876 / 45 / 13; below the confidence alone 887 / 41 / 13 (passes
   * 946 / 19 / 0 -> 964 / 12 / 0: the 80 deg/s pass on the pair, failed in four draws, on one track
   * in all; crossings 625 / 18 / 8 -> 641 / 17 / 8; choruses 930 / 8 / 5 -> 933 / 12 / 5, a lobe's
   * stray event beside a passer); with the SNR below 20 or 30 dB as well 884 / 48 / 13 and 882 / 49
   * / 13; below both levels or a confidence below 0.35 or 0.42, 880 / 46 / 13 and 886 / 42 / 13.
   * Held out (2718, 4040, 9999): 89 / 7 / 6, 95 / 4 / 2 as before, 81 / 10 / 3 -> 80 / 10 / 3. Earlier,
   * on eight draws and older code: without any rule 613 / 79 / 12, below both levels 623 / 78 / 12,
   * the confidence alone 624 / 77 / 13.
   */
  private tooWeakToMove(j: number): boolean {
    const sc = this.sc;
    const o = this.options;
    return sc.hop[CONFIDENCE]! * sc.candScore[j]! < o.eventEnterConfidence;
  }

  private support(s: number, j: number, moved = true): void {
    this.hits[s] = this.hits[s]! + 1;
    this.lastSupportT[s] = this.sc.hop[TIME]!;
    if (moved) this.lastMovedT[s] = this.sc.hop[TIME]!;
    if (moved && this.candAlias[j]! < 0) this.lastOwnT[s] = this.sc.hop[TIME]!;
    if (this.candHomeAz[j] === 0) this.lastFreeT[s] = this.sc.hop[TIME]!;
    this.hopCount[s] = this.hopCount[s]! + 1;
    this.lifetime.add(s, j);
    // A support that did not update the filters leaves the resting place where it was.
    if (!moved) return;
    this.restAz[s] = this.az.angle[s]!;
    this.restAzVar[s] = this.az.variance(s);
    this.restEl[s] = this.hasEl[s] === 1 ? this.el.angle[s]! : NaN;
    this.restElVar[s] = this.hasEl[s] === 1 ? this.el.variance(s) : NaN;
  }

  /** Starts tentative tracks; returns the events a dormant or quiet settled track whose slot was taken still had open (longestUnmoved). */
  private births(nC: number): EventRecord[] | null {
    let events: EventRecord[] | null = null;
    const o = this.options;
    const sc = this.sc;
    for (let j = 0; j < nC; j++) {
      if (this.candUsable[j] === 0 || this.candTaken[j] === 1) continue;
      if (sc.hop[CONFIDENCE]! * sc.candScore[j]! < o.birthConfidence || this.candFirm[j] === 0 || this.candAlias[j] >= 0) continue;
      if (Math.abs(sc.candEl[j]!) > ZENITH_DEG) continue;
      if (this.candGated[j] === 1 || this.candHome[j] === 1 || this.withinAnyGate(j)) continue;
      let s = 0;
      while (s < this.size && this.state[s] !== FREE) s++;
      if (s === this.size) {
        // Every slot is taken: a dormant track (the longest unmoved) makes room.
        s = this.longestUnmoved(false);
        if (s < 0) s = this.longestUnmoved(true);
        if (s < 0) return events;
        events = this.retire(s, events);
      }
      this.state[s] = TENTATIVE;
      this.id[s] = -1;
      this.hits[s] = 0;
      this.age[s] = 0;
      this.hopCount[s] = 0;
      this.eventCount[s] = 0;
      this.activeS[s] = 0;
      this.firstSeenT[s] = sc.hop[TIME]!;
      this.filterT[s] = sc.hop[TIME]!;
      this.lastFreeT[s] = -Infinity;
      this.still[s] = 0;
      this.lifetime.reset(s);
      this.cutter.reset(s);
      this.az.io[IO_Z] = sc.candAz[j]!;
      this.az.io[IO_R] = this.azimuthVariance(j);
      this.az.init(s);
      const el = sc.candEl[j]!;
      this.hasEl[s] = el === el ? 1 : 0;
      if (el === el) {
        this.el.io[IO_Z] = el;
        this.el.io[IO_R] = sc.candR[j]!;
        this.el.init(s);
      }
      this.chosen[s] = j;
      this.candTaken[j] = 1;
      this.support(s, j);
    }
    return events;
  }

  /**
   * A candidate inside the gate of a live track is that track's (a side peak), not a newcomer;
   * so is one that only FLAT_ELEVATION_GATE_DEG kept out of it (on a flat array an aliased lobe of
   * a call above the array's aliasing limit reads at the caller's azimuth and 35-60 degrees up).
   */
  private withinAnyGate(j: number): boolean {
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] === FREE || this.dormant[s] === 1 || this.otherBand(s, j) || this.strangerOffHome(s, j)) continue;
      if (this.flat && this.nearZenith(s) && this.belowOnFlat(s, j)) continue;
      // A settled track quiet beyond --track-timeout (kept by --static-timeout) takes nothing beyond its reach, and keeps nothing there from starting a track.
      if (this.settled[s] === 1 && this.quietBeyondTimeout(s) && this.beyondReach(s, j)) continue;
      if (this.gate(s, j, false)) return true;
    }
    return false;
  }

  /**
   * On a flat array: does candidate j read more than FLAT_ELEVATION_GATE_DEG lower (nearer the
   * horizon) than track s? Such a track cannot take it (gate()'s elevation rule); one near the
   * zenith does not keep it from starting a track of its own either (withinAnyGate): wind and
   * sound from overhead read high on a flat array and their tracks' azimuth gates are wide, while
   * a lobe of a caller reads higher than its caller.
   */
  private belowOnFlat(s: number, j: number): boolean {
    const ref = this.restEl[s]!;
    return this.hasEl[s] === 1 && ref - this.sc.candEl[j]! > FLAT_ELEVATION_GATE_DEG;
  }

  /** Confirms or drops tentative tracks; returns the events that a revived dormant track still had open (see revive()). */
  private tentativeBookkeeping(events: EventRecord[] | null): EventRecord[] | null {
    const o = this.options;
    for (let s = 0; s < this.size; s++) {
      if (this.state[s] !== TENTATIVE) continue;
      this.age[s] = this.age[s]! + 1;
      if (this.hits[s]! >= o.confirmHits) {
        this.state[s] = CONFIRMED;
        let d = this.dormantMatch(s);
        if (d < 0) d = this.onwardMatch(s);
        if (d < 0) this.id[s] = this.nextId++;
        else events = this.revive(d, s, events);
      } else if (this.age[s]! >= o.confirmWindow) {
        this.state[s] = FREE;
        this.cutter.reset(s);
        this.chosen[s] = -1;
      }
    }
    return events;
  }

  /** Has slot s gone longer than --track-timeout without a support that moved it (a settled track, which --static-timeout keeps)? */
  private quietBeyondTimeout(s: number): boolean {
    return this.sc.hop[TIME]! - this.lastMovedT[s]! > this.options.trackTimeoutS;
  }

  /**
   * The slot that has gone longest without moving among the dormant ones, or (`settled`) among the
   * settled ones quiet beyond --track-timeout; -1 for none.
   */
  private longestUnmoved(settled: boolean): number {
    let best = -1;
    for (let d = 0; d < this.size; d++) {
      const mayGo = settled ? this.settled[d] === 1 && this.quietBeyondTimeout(d) : this.dormant[d] === 1;
      if (mayGo && (best < 0 || this.lastMovedT[d]! < this.lastMovedT[best]!)) best = d;
    }
    return best;
  }

  /**
   * The dormant track in whose resting place's gate slot s's candidate of this hop lies, the
   * cheapest; -1 for none. Not its prediction's gate: coasted for seconds, that has grown to
   * the cap (8 deg, a reach of 28) and would lend a stray's id to another caller 20 deg away.
   */
  private dormantMatch(s: number): number {
    const j = this.chosen[s]!;
    let best = -1;
    let bestCost = Infinity;
    if (j < 0) return best;
    for (let d = 0; d < this.size; d++) {
      if (d === s || this.dormant[d] === 0 || this.otherBand(d, j)) continue;
      if (this.restGate(d, j) && this.d2[0]! < bestCost) {
        bestCost = this.d2[0]!;
        best = d;
      }
    }
    return best;
  }

  /**
   * The coasting young mover ahead of which slot s's candidate of this hop lies (the onward
   * model, ONWARD_SPAN_S), the one moved last; -1 for none.
   */
  private onwardMatch(s: number): number {
    const j = this.chosen[s]!;
    let best = -1;
    if (j < 0) return best;
    const t = this.sc.hop[TIME]!;
    // (A dormant track has not moved for longer than the quiet window; the candidate that confirms a
    // tentative track is firm: assignStage.)
    for (let d = 0; d < this.size; d++) {
      if (d === s || this.state[d] !== CONFIRMED || this.settled[d] === 1 || this.otherBand(d, j)) continue;
      const quiet = t - this.lastMovedT[d]!;
      if (!(quiet >= ONWARD_MIN_GAP_S && quiet <= REST_AFTER_S) || this.lastMovedT[d]! - this.filterT[d]! >= ONWARD_SPAN_S) continue;
      const rate = this.az.rate[d]!;
      if (!(Math.abs(rate) >= ONWARD_MIN_RATE_DEG_S)) continue;
      const implied = this.azimuthOffset(j, this.restAz[d]!) / quiet;
      if (!(implied * rate > 0) || Math.abs(implied) > Math.min(this.options.maxRateDegS, ONWARD_RATIO * Math.abs(rate))) continue;
      if (best < 0 || this.lastMovedT[d]! > this.lastMovedT[best]!) best = d;
    }
    return best;
  }

  /**
   * Newly confirmed slot s is dormant slot d's caller calling again (or young mover d's next call,
   * onwardMatch): s takes d's id and history (its lifetime directions, hops, events, first
   * sighting) and d is freed (its open event, if any, closed into `events`, returned). s keeps
   * its own filters and open event.
   */
  private revive(d: number, s: number, events: EventRecord[] | null): EventRecord[] | null {
    events = this.retire(d, events, false);
    this.id[s] = this.id[d]!;
    this.hopCount[s] = this.hopCount[s]! + this.hopCount[d]!;
    this.eventCount[s] = this.eventCount[d]!;
    this.activeS[s] = this.activeS[d]!;
    this.firstSeenT[s] = this.firstSeenT[d]!;
    this.lastFreeT[s] = Math.max(this.lastFreeT[s]!, this.lastFreeT[d]!);
    this.lifetime.merge(d, s);
    return events;
  }

  private collect(events: EventRecord[] | null, s: number, record: EventRecord): EventRecord[] {
    this.eventCount[s] = this.eventCount[s]! + 1;
    this.activeS[s] = this.activeS[s]! + (record.end_s - record.start_s);
    if (events === null) return [record];
    events.push(record);
    return events;
  }

  /**
   * Ends confirmed slot s: closes its open event (added to `events`, returned), frees the slot,
   * and keeps its summary unless `summary` is false (its history lives on in another slot).
   */
  private retire(s: number, events: EventRecord[] | null, summary = true): EventRecord[] | null {
    const open = this.cutter.close(s, this.id[s]!);
    if (open !== null) events = this.collect(events, s, open);
    if (summary) this.finished.push(this.summarise(s, false));
    this.state[s] = FREE;
    this.dormant[s] = 0;
    this.cutter.reset(s);
    return events;
  }

  private summarise(s: number, alive: boolean): TrackSummary {
    return {
      track: this.id[s]!,
      events: this.eventCount[s]!,
      azimuthDeg: this.lifetime.meanAzimuthDeg(s),
      spreadDeg: this.lifetime.spreadDeg(s),
      elevationDeg: this.lifetime.meanElevationDeg(s),
      activeS: this.activeS[s]!,
      hops: this.hopCount[s]!,
      firstSeenS: this.firstSeenT[s]!,
      lastSeenS: this.lastSupportT[s]!,
      alive,
      mirror: this.options.mirror?.kind ?? null,
      mirrorAxisDeg: this.options.mirror?.axisDeg ?? null,
    };
  }

  private idsFor(length: number): (number | null)[] {
    let ids = this.idsByLength[length];
    if (ids === undefined) {
      ids = new Array<number | null>(length).fill(null);
      this.idsByLength[length] = ids;
    }
    return ids;
  }
}

/**
 * The log2 centre of the hop's caller when all its candidates are one caller's, else NaN (worked
 * out once per hop; every candidate of that caller carries it).
 * In a hop with several, the louder caller's candidate wins the bands they share and each one's
 * centre says more about the split than the call. A candidate and its aliases (aliasOf: a lobe
 * that the same sound fits as well) are one caller, heard in the bands of the one they alias:
 * a high sweep passing a chorus' home on a 10 cm triangle, recorded at 16 kHz, was read at its
 * bearing as an alias of a lobe 70 deg up, and with the two counted as two callers its centre
 * (about 3 kHz, two octaves over the chorus' 730 Hz) was not asked and the chorus' track took
 * the call (motion matrix draw 222, cho04, at its three speeds of sound). Motion matrix (callers
 * under 80 % complete / id switches / tracks holding two; cells out): 16 kHz, 23 draws 93 / 99 /
 * 21; 100 -> 93 / 96 / 18; 101 (2027 pas03 two id switches, 9999 crs04 a caller 91 -> 73 %),
 * ten further draws 39 / 54 / 11; 47 -> 40 / 55 / 11; 47; 48 kHz, 23 draws and ten further,
 * the same figures (four passers gained calls: 9999 cho01 at three speeds of sound 83-92 -> 100
 * %, 444 cho02 93 -> 100 %); the accuracy matrix identical.
 */
function soleCallerLogHz(cands: readonly DirectionCandidate[]): number {
  if (cands.length === 0) return NaN;
  const caller = callerOf(cands, 0);
  for (let k = 1; k < cands.length; k++) if (callerOf(cands, k) !== caller) return NaN;
  const hz = cands[caller]!.centreHz;
  return hz !== undefined && hz > 0 ? Math.log2(hz) : NaN;
}

/** The candidate whose sound candidate k is: the one it is an alias of, else k itself. */
function callerOf(cands: readonly DirectionCandidate[], k: number): number {
  const a = cands[k]!.aliasOf;
  return a !== undefined && a >= 0 && a < cands.length ? a : k;
}
