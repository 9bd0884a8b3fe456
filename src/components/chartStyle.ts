// The look shared by the history charts: axis text, one series style per design, day labels.

export const axis = { fontSize: 11, fill: '#4b5280' };

/** Lines of designs differ by dash as well as colour. */
export const SERIES = [
  { color: '#c4551a', dash: undefined },
  { color: '#353b62', dash: '6 3' },
  { color: '#1d7a5c', dash: '2 3' },
  { color: '#8d2f99', dash: '10 3 2 3' },
  { color: '#7a5b12', dash: '4 4' },
  { color: '#2a6f9b', dash: '1 2' },
];

export const dayFmt = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short' });
