/**
 * SGP4 verification cases for the tests. Source: Vallado, Crawford, Hujsak and Kelso,
 * "Revisiting Spacetrack Report #3", AIAA 2006-6753 (Rev 3), Appendix D (element sets) and
 * Appendix E (TEME results, km and km/s), as copied in shared/design/references.md.
 */
export interface VerificationState {
  tsinceMin: number;
  r: [number, number, number];
  v: [number, number, number];
}

export interface VerificationCase {
  catalog: string;
  what: string;
  line1: string;
  line2: string;
  states: VerificationState[];
}

export const AIAA_2006_6753_CASES: VerificationCase[] = [
  {
    catalog: '00005',
    what: 'near-earth',
    line1: '1 00005U 58002B   00179.78495062  .00000023  00000-0  28098-4 0  4753',
    line2: '2 00005  34.2682 348.7242 1859667 331.7664  19.3264 10.82419157413667',
    states: [
      { tsinceMin: 0, r: [7022.46529266, -1400.08296755, 0.03995155], v: [1.893841015, 6.405893759, 4.53480725] },
      {
        tsinceMin: 360,
        r: [-7154.03120202, -3783.17682504, -3536.19412294],
        v: [4.741887409, -4.151817765, -2.093935425],
      },
    ],
  },
  {
    catalog: '28129',
    what: '12-hour, deep space',
    line1: '1 28129U 03058A   06175.57071136 -.00000104  00000-0  10000-3 0   459',
    line2: '2 28129  54.7298 324.8098 0048506 266.2640  93.1663  2.00562768 18443',
    states: [{ tsinceMin: 0, r: [21707.46412351, -15318.6175239, 0.13551152], v: [1.304029214, 1.816904974, 3.161919976] }],
  },
  {
    catalog: '11801',
    what: 'deep space, high eccentricity, no ephemeris-type digit',
    line1: '1 11801U          80230.29629788  .01431103  00000-0  14311-1      13',
    line2: '2 11801  46.7916 230.4354 7318036  47.4722  10.4117  2.28537848    13',
    states: [{ tsinceMin: 0, r: [7473.37102491, 428.94748312, 5828.74846783], v: [5.107155391, 6.444680305, -0.186133297] }],
  },
  {
    catalog: '88888',
    what: "near-earth, the original report's case",
    line1: '1 88888U          80275.98708465  .00073094  13844-3  66816-4 0    87',
    line2: '2 88888  72.8435 115.9689 0086731  52.6988 110.5714 16.05824518  1058',
    states: [{ tsinceMin: 0, r: [2328.96975262, -5995.22051338, 1719.97297192], v: [2.912073281, -0.983417956, -7.09081621] }],
  },
];
