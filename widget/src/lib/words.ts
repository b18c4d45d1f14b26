/**
 * The widget's words in English, German, French and Spanish. English is built into the script;
 * the others are JSON files beside it (`widget/src/locales/*.json`, copied to `assets/` with a
 * content hash by the build), fetched once per page when the `locale` attribute or the browser
 * asks for them, so they cost the bundle nothing. Each locale file holds every key of `EN` with
 * the same {placeholders}, and the name of every country of the map (words.spec.ts checks both);
 * a missing key or name reads in English.
 *
 * A value is a string with {name} placeholders, or plural forms chosen by the `n` parameter
 * through Intl.PluralRules ({ one, other }, plus few/many where a language has them).
 */
export type Plural = { one: string; other: string; few?: string; many?: string; zero?: string; two?: string };
export type Msg = string | Plural;

export const EN = {
  // controls
  satellites: 'Satellites',
  satelliteLoading: 'Satellite {n}, loading',
  mapView: 'Map view',
  viewMap: 'Map',
  viewGlobe: 'Globe',
  loadingOrbits: 'Loading orbits…',
  worldFailed: 'The world outline could not be loaded; tracks are drawn on the grid alone.',
  mapLabel: 'Ground track map of {list}. Arrow keys turn the map; Home resets it.',
  globeLabel: 'Ground track globe of {list}. Arrow keys turn the globe; Home resets it.',
  satellitesWord: 'satellites',
  // location
  askPasses: 'Show passes over me',
  locating: 'Waiting for your location…',
  noGeolocation: 'This browser cannot share a location, so passes cannot be worked out.',
  locationRefused: 'Location not shared. Passes need a place; nothing else changes.',
  // about
  about: 'About these positions',
  aboutAccuracy: 'Positions are computed by Nadirline with SGP4 from mean element sets. They are good to a few kilometres near the element set’s epoch and drift further as it ages.',
  aboutAccuracyAges: 'Positions are computed by Nadirline with SGP4 from mean element sets. They are good to a few kilometres near the element set’s epoch and drift further as it ages ({ages}).',
  aboutCaution: 'Not for collision avoidance, navigation, safety-of-life or operational decisions: rely on the operator’s own orbit determination and on local rules. Never look at or point anything toward the Sun.',
  elementSetAge: '{name}: element set {age} old',
  // the picked satellite
  details: '{name} details',
  closeDetails: 'Close {name} details',
  over: 'Over {place}',
  altitude: 'Altitude',
  speed: 'Speed',
  light: 'Light',
  sunlit: 'in sunlight',
  shadow: 'in Earth’s shadow',
  nextPass: 'Next pass',
  orbitData: 'Orbit data',
  ageOld: '{age} old',
  noPassSoon: 'none in the next two days',
  passWhen: '{time}, rising {dirIn}',
  passWhenDay: '{day} {time}, rising {dirIn}',
  // passes
  you: 'you',
  passesTitle: 'Next passes of {name} over {place}',
  timesIn: 'times in {zone}',
  localTime: 'local time',
  mask: 'Rise and set are at {deg}° above the horizon.',
  workingPasses: 'Working out passes…',
  alwaysUp: '{name} stays above {deg}° over {place}: it never rises or sets.',
  noPasses: 'No passes higher than {deg}° in the next two days.',
  passPath: 'rises {riseDir} · highest {elevation} {highestDir} at {highest} · sets {setDir} {set}',
  passPathOpen: 'rises {riseDir} · {elevation} · still up at {set}, when the forecast ends',
  soFar: '{deg}° so far',
  visible: 'visible',
  notVisible: 'not visible',
  passSentence: '{day}climbs above {mask} degrees at {rise} {riseDirIn}, highest at {highest}, {deg} degrees up {highestDirIn}, sinks below {mask} degrees at {set} {setDirIn}, {visibility}',
  passSentenceOpen: '{day}climbs above {mask} degrees at {rise} {riseDirIn}, still up at {set} when the forecast ends, {deg} degrees up so far, {visibility}',
  visibleToEye: 'visible to the eye',
  notVisibleToEye: 'not visible to the eye',
  // the live region
  liveAt: '{name} is at {lat}, {lon}, {alt} kilometres up, {light}.',
  liveOver: '{name} is over {place} at {lat}, {lon}, {alt} kilometres up, {light}.',
  liveLastKnown: '{name}: last known position.',
  liveNextPass: 'Next pass over {place} at {time}, rising {dirIn}.',
  latNorth: '{d} degrees north',
  latSouth: '{d} degrees south',
  equator: 'the equator',
  lonEast: '{d} degrees east',
  lonWest: '{d} degrees west',
  lonPlain: '{d} degrees',
  // compass: the direction alone, and "in the ..." for sentences
  n: 'north',
  ne: 'north-east',
  e: 'east',
  se: 'south-east',
  s: 'south',
  sw: 'south-west',
  w: 'west',
  nw: 'north-west',
  inN: 'in the north',
  inNE: 'in the north-east',
  inE: 'in the east',
  inSE: 'in the south-east',
  inS: 'in the south',
  inSW: 'in the south-west',
  inW: 'in the west',
  inNW: 'in the north-west',
  // ages and waits
  hours: { one: '{n} hour', other: '{n} hours' },
  days: '{n} days',
  seconds: { one: '{n} second', other: '{n} seconds' },
  minutes: { one: '{n} minute', other: '{n} minutes' },
  // seas and oceans (country names come from the map data in English, from WordTable `countries` in the other languages)
  caspian: 'the Caspian Sea',
  black: 'the Black Sea',
  red: 'the Red Sea',
  persian: 'the Persian Gulf',
  baltic: 'the Baltic Sea',
  northSea: 'the North Sea',
  hudson: 'Hudson Bay',
  southChina: 'the South China Sea',
  arctic: 'the Arctic Ocean',
  southern: 'the Southern Ocean',
  mediterranean: 'the Mediterranean Sea',
  indian: 'the Indian Ocean',
  northAtlantic: 'the North Atlantic',
  southAtlantic: 'the South Atlantic',
  northPacific: 'the North Pacific',
  southPacific: 'the South Pacific',
  // the time control; a span is "2 h 10 min", and the offset says which way from now or the pinned time
  timeLabel: 'Time shown on the map',
  backToNow: 'Back to now',
  backToPinned: 'Back to the pinned time',
  orbitBack: '− 1 orbit',
  orbitAhead: '+ 1 orbit',
  orbitBackLabel: 'One orbit back',
  orbitAheadLabel: 'One orbit ahead',
  shown: 'Shown: {time}, {offset}',
  announce: 'Map shows {time} ({offset}).',
  panelAt: 'Position at {time}, {offset}',
  offsetNow: 'now',
  offsetPinned: 'the pinned time',
  offsetAhead: '{span} ahead',
  offsetBack: '{span} back',
  offsetAfterPinned: '{span} after the pinned time',
  offsetBeforePinned: '{span} before the pinned time',
  spanH: '{h} h',
  spanM: '{m} min',
  spanHM: '{h} h {m} min',
  // the sky plot and the calendar link; abbrN..abbrW also mark coordinates ("51.6° N")
  skyOpen: 'Sky path',
  skyOpenLabel: 'Show the path across your sky of the pass at {when}',
  skyClose: 'Close',
  skyTitle: '{name} across your sky, {when}',
  abbrN: 'N',
  abbrE: 'E',
  abbrS: 'S',
  abbrW: 'W',
  skyRise: 'rise',
  skySet: 'set',
  legendVisible: 'sunlit in a dark sky: visible to the eye',
  legendSunlit: 'sunlit, but your sky is still light',
  legendShadow: 'in the Earth’s shadow',
  skyLoading: 'Working out the path…',
  skyFailed: 'The path could not be loaded.',
  skyRiseText: 'Rises at {time} {dirIn}.',
  skyHighestText: 'Highest at {time}, {deg}° above the horizon {dirIn}.',
  skySetText: 'Sets at {time} {dirIn}.',
  runVisible: 'From {from} to {to} it is sunlit while your sky is dark: look for it.',
  runSunlit: 'From {from} to {to} it is sunlit, but your sky is too light to see it.',
  runShadow: 'From {from} to {to} it is in the Earth’s shadow.',
  skyOrientation: 'North is at the top, east to the right; the centre is straight overhead, the circle the horizon.',
  calendarAdd: 'Add to calendar',
  calendarAddLabel: 'Add the passes of {name} over {place} to your calendar (iCalendar file)',
  mapRole: 'map',
  // problems (messages.ts)
  thisSatellite: 'this satellite',
  ThisSatellite: 'This satellite',
  quoted: '“{name}”',
  thisSite: 'this site',
  keyHelp: 'The site owner can set a current browser key in the api-key attribute, from the Nadirline console.',
  noKeyHead: 'This map has no key',
  noKeyText: 'Without one Nadirline cannot show it. The page owner can set the api-key attribute of <nadir-track> to a browser key from the Nadirline console, or set the embed attribute to a saved embed’s id.',
  invalidKeyHead: 'Map key not accepted',
  invalidKeyText: 'Nadirline did not accept the key this map uses. {help}',
  expiredHead: 'Map key expired',
  expiredText: 'The key this map uses has expired. {help}',
  revokedHead: 'Map key withdrawn',
  revokedText: 'The key this map uses has been revoked. {help}',
  rotatedHead: 'Map key replaced',
  rotatedText: 'The key this map uses was replaced by a new one. {help}',
  originHead: 'Not allowed on this site',
  originText: 'This map’s key is not allowed on {origin}. The site owner can add this address to the key’s allowed origins in the Nadirline console.',
  quotaHead: 'Allowance used up',
  quotaText: 'This site has used its Nadirline allowance for now. The map will try again in {wait}.',
  busyHead: 'Busy for a moment',
  busyText: 'Too many requests just now. Trying again in {wait}.',
  notFoundHead: 'Satellite not found',
  notFoundText: 'Nadirline does not know {sat}, or this key may not show it. The site owner can check the satellites attribute.',
  staleHead: 'Old orbit data',
  staleText: 'The orbit data for {sat} is {age} old, so its position may be off by many kilometres.',
  staleTextNoAge: 'The orbit data for {sat} is out of date, so its position may be off by many kilometres.',
  noSetHead: 'No orbit data yet',
  noSetText: '{Sat} has no element set yet, so it cannot be drawn. The satellite’s team can upload one in the Nadirline console.',
  decayedHead: 'No longer in orbit',
  decayedText: '{Sat} appears to have re-entered or its orbit can no longer be computed.',
  decayedTextAge: '{Sat} appears to have re-entered or its orbit can no longer be computed (orbit data {age} old).',
  propagationHead: 'Position not available',
  propagationText: 'Nadirline could not work out where {sat} is from its element set. The satellite’s team can check its latest upload.',
  noSatellitesHead: 'Nothing to show yet',
  noSatellitesText: 'No satellites are set for this map. The site owner can list satellite ids in the satellites attribute or choose an embed.',
  networkHead: 'No connection',
  networkText: 'Cannot reach Nadirline.',
  serverHead: 'Nadirline did not answer properly',
  serverText: 'The Nadirline service had a problem.',
  keptData: 'Showing what was known at {time}, marked as out of date.',
  tryingAgain: 'Trying again in {wait}.',
  refusedHead: 'Not allowed',
  refusedText: 'Nadirline refused this map’s requests ({what}). The site owner can check the key in the Nadirline console.',
  refusedKeyText: 'Nadirline refused this map’s requests ({what}). {help}',
  mapNotFoundHead: 'Map not found',
  mapNotFoundText: 'This saved map no longer exists. The site owner can choose another embed in the Nadirline console.',
  satNotShownHead: 'Satellite not shown',
  satNotShownText: 'Nadirline could not give the orbit of {sat} ({what}).',
  unexpectedHead: 'Something went wrong',
  unexpectedText: 'Nadirline answered with an unexpected problem ({what}). Trying again in {wait}.',
} satisfies Record<string, Msg>;

export type WordKey = keyof typeof EN;
/**
 * A language's words, and its names of the map's countries (`countries`, by the world-atlas id,
 * the ISO 3166 numeric code, or by the atlas's English name for the three areas it gives no id),
 * written as they read in the language's "over {place}" sentences.
 */
export type WordTable = { [K in WordKey]?: Msg } & { countries?: Record<string, string> };
export type Params = Record<string, string | number>;
export interface Translate {
  (key: WordKey, params?: Params): string;
  /** The language's country names (WordTable `countries`); none for English, which reads the map's own. */
  countries?: Record<string, string> | undefined;
}

/** Languages the widget speaks; the first is the one built in. */
export const LANGS = ['en', 'de', 'fr', 'es'] as const;
export type Lang = (typeof LANGS)[number];

/**
 * The language for the widget: the `locale` attribute's language when it is one we speak, else
 * the first of the browser's languages that is, else English.
 */
export function chooseLang(locale: string | undefined, browser: readonly string[] = typeof navigator === 'undefined' ? [] : navigator.languages ?? [navigator.language]): Lang {
  const candidates = locale ? [locale] : browser;
  for (const c of candidates) {
    const base = String(c).toLowerCase().split(/[-_]/)[0] as Lang;
    if ((LANGS as readonly string[]).includes(base)) return base;
  }
  return 'en';
}

function fill(text: string, params: Params | undefined): string {
  if (!params) return text;
  return text.replace(/\{(\w+)\}/g, (m, name: string) => (name in params ? String(params[name]) : m));
}

/** A translator for one language: its table first, English for anything it lacks. */
export function translator(lang: Lang, table: WordTable | null = null): Translate {
  let plural: Intl.PluralRules | undefined;
  const t: Translate = (key, params) => {
    const msg: Msg = table?.[key] ?? EN[key];
    if (typeof msg === 'string') return fill(msg, params);
    try {
      plural ??= new Intl.PluralRules(lang);
    } catch {
      plural = new Intl.PluralRules('en');
    }
    const form = plural.select(Number(params?.n ?? 0)) as keyof Plural;
    return fill(msg[form] ?? msg.other, params);
  };
  t.countries = table?.countries;
  return t;
}

export const english: Translate = translator('en');

const DIRS = ['n', 'ne', 'e', 'se', 's', 'sw', 'w', 'nw'] as const;
const DIRS_IN = ['inN', 'inNE', 'inE', 'inSE', 'inS', 'inSW', 'inW', 'inNW'] as const;
const dirIndex = (azimuthDeg: number) => Math.round((((azimuthDeg % 360) + 360) % 360) / 45) % 8;

/** Azimuth (0 north, 90 east) as one of eight compass words: "north-east". */
export function compassIn(t: Translate, azimuthDeg: number): string {
  return t(DIRS[dirIndex(azimuthDeg)]!);
}
/** The same for a sentence: "in the north-east". */
export function compassPhrase(t: Translate, azimuthDeg: number): string {
  return t(DIRS_IN[dirIndex(azimuthDeg)]!);
}
