/**
 * Colours of the report and the replay viewer.
 *
 * Categories (robot states, robot time split, policies) use the Okabe-Ito palette (Okabe &
 * Ito, "Color Universal Design", 2008), chosen so that every pair stays apart for protan,
 * deutan and tritan vision, and assigned so that the robot time categories also step in
 * lightness (CIE L* about 45, 58, 69, 81, 90) and stay apart when printed in grey.
 * Heat (waiting time per cell) uses five classes of viridis (van der Walt & Smith, the
 * matplotlib colour map designed to stay ordered for colour-vision deficiencies and in
 * grey), light yellow for little waiting to dark violet for much. ColorBrewer's YlOrRd
 * was tried first: its two lightest classes merge for deuteranopes (CIEDE2000 below 7).
 * test/palette.test.ts checks both claims with culori's deficiency simulation (Machado,
 * Oliveira & Fernandes 2009) and CIEDE2000.
 */

/** Robot states of the replay, and the robot time split of the report (parked = no task). */
export const stateColours = {
  loaded: '#0072b2',
  handling: '#009e73',
  empty: '#56b4e9',
  parked: '#c8c8c8',
  waiting: '#f0e442',
  stalled: '#d55e00',
} as const;

/** The five robot time categories of the run summary, in its order. */
export const robotTimeColours = [stateColours.loaded, stateColours.empty, stateColours.handling, stateColours.waiting, stateColours.parked] as const;
/** Robot time charging (with a battery) and broken down (with breakdowns): Okabe-Ito reddish purple and orange, labelled bars. */
export const chargingColour = '#cc79a7';
export const brokenColour = '#e69f00';

/** Policies in a comparison (Okabe-Ito, black and yellow left out: black is for text, yellow is faint on white). */
export const policyColours = ['#0072b2', '#d55e00', '#009e73', '#cc79a7', '#e69f00', '#56b4e9'] as const;

/**
 * Lines of a chart with several series (sweep and size curves): Okabe-Ito without
 * vermillion, which marks targets and recommendations, and without yellow (faint on white);
 * dark grey as the sixth.
 */
export const seriesColours = ['#0072b2', '#e69f00', '#009e73', '#cc79a7', '#56b4e9', '#555555'] as const;

/** Viridis at 5 evenly spaced stops (memory), light to dark. */
export const heatColours = ['#fde725', '#5ec962', '#21918c', '#3b528b', '#440154'] as const;

/** Walls and blocked cells. */
export const wallColour = '#4d4d4d';
/** Accent for target lines and recommendations (Okabe-Ito vermillion). */
export const accentColour = '#d55e00';
