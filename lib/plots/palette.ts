/**
 * Okabe & Ito (2008), "Color Universal Design": a categorical palette distinguishable with the
 * common forms of colour blindness. Plots use it for groups; ink and rules are greys.
 */
export const OKABE_ITO = {
  black: "#000000",
  orange: "#E69F00",
  skyBlue: "#56B4E9",
  bluishGreen: "#009E73",
  yellow: "#F0E442",
  blue: "#0072B2",
  vermillion: "#D55E00",
  reddishPurple: "#CC79A7",
} as const;

/** Group colours in a fixed order (yellow last: it is weak on white). */
export const GROUP_COLOURS = [OKABE_ITO.blue, OKABE_ITO.vermillion, OKABE_ITO.bluishGreen, OKABE_ITO.reddishPurple, OKABE_ITO.orange, OKABE_ITO.skyBlue, OKABE_ITO.black, OKABE_ITO.yellow];

export const INK = "#1d2327";
export const INK_SOFT = "#5b666c";
export const RULE = "#c9c4b5";
