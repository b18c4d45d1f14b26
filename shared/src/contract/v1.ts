/**
 * The /v1 contract as data: caps, the zod schemas that validate every request, response shapes,
 * and the route table. The server's router (server/src/routes/v1) validates with these schemas and
 * its services/openapi.ts turns the same table into the OpenAPI 3.1 document, so the two cannot
 * drift apart; the answer types at the end are what the server writes and the widget reads.
 */
import { z } from 'zod';
import { expects } from './hints.ts';
import { AGING_MAX_AGE_DAYS, CIVIL_TWILIGHT_DEG, EARTH_RADIUS_WGS84_KM, FRESH_MAX_AGE_DAYS, MU_WGS84_KM3_S2 } from '../orbit/constants.ts';

/** Request caps (also published in the OpenAPI document and on /docs/api). */
export const CAPS = {
  /** Longest track window, seconds (2 days). */
  trackMaxWindowS: 2 * 86_400,
  /** Most points in one track answer. */
  trackMaxPoints: 5_000,
  trackMinStepS: 1,
  trackMaxStepS: 3_600,
  trackDefaultStepS: 60,
  /** Track windows whose start and end fall on whole multiples of this are cacheable (seconds). */
  trackCacheQuantumS: 60,
  passesMaxDays: 14,
  passesDefaultDays: 3,
  passesDefaultMinElevationDeg: 10,
  positionsMaxIds: 50,
  /** Most satellites in one batch track request (GET /v1/tracks). */
  tracksMaxIds: 50,
  /** Most points of all tracks together in one batch answer (50 satellites of about 1200 points). */
  tracksMaxPoints: 60_000,
  /** Largest element-set body or file, bytes. */
  uploadMaxBytes: 2 * 1024 * 1024,
  uploadMaxFiles: 20,
  /**
   * Farthest a time may lie from the epoch of the element set in force at it, days, either side
   * (the engine's MAX_PROPAGATION_SPAN_DAYS): beyond it the answer is 422 propagation-failed with
   * reason too-far-from-epoch.
   */
  maxDaysFromEpoch: 365,
  /** Times are accepted from this year to the last one (the set in force decides what can be computed). */
  firstYear: 1957,
  lastYear: 2199,
  /** Step of pass sky paths (path=true), seconds; coarser for long passes so a path holds at most skyPathMaxPoints. */
  skyPathStepS: 10,
  skyPathMaxPoints: 200,
  /** Longest pass calendar, days. */
  calendarMaxDays: 14,
  calendarDefaultDays: 7,
} as const;

const ISO_EXAMPLE = '2025-01-31T12:00:00Z';

/** An ISO 8601 date-time with a zone (Z or ±hh:mm), to Unix ms. */
const isoTime = (description: string) =>
  expects(
    z
      .string()
      .max(40)
      .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:?\d{2})$/i, 'must be an ISO 8601 UTC time such as 2025-01-31T12:00:00Z')
      .transform((v, ctx) => {
        const ms = Date.parse(v);
        if (!Number.isFinite(ms)) {
          ctx.addIssue({ code: 'custom', message: 'is not a real date and time' });
          return z.NEVER;
        }
        if (ms < Date.UTC(CAPS.firstYear, 0, 1) || ms >= Date.UTC(CAPS.lastYear + 1, 0, 1)) {
          ctx.addIssue({ code: 'custom', message: `must lie between the years ${CAPS.firstYear} and ${CAPS.lastYear}` });
          return z.NEVER;
        }
        return ms;
      })
      .meta({ format: 'date-time', description, example: ISO_EXAMPLE }),
    `an ISO 8601 UTC time such as ${ISO_EXAMPLE}`,
  );

/** A number from a query parameter; `what` says in words what it is, for messages. */
const num = (min: number, max: number, description: string, what: string) => expects(z.coerce.number().min(min).max(max).meta({ description }), what);

export const SATELLITE_ID = /^[A-Za-z0-9_-]{1,40}$/;
export const idParam = z.string().min(1).max(40).regex(SATELLITE_ID, 'is not a satellite id').meta({ description: 'Satellite id, as GET /v1/satellites lists it.' });

export const trackQuery = z.object({
  start: isoTime('First point. Default: now, rounded down to the minute.').optional(),
  end: isoTime(`Last point at or before this time. Default: one orbital period after start. At most ${CAPS.trackMaxWindowS / 3600} h after start.`).optional(),
  step: num(
    CAPS.trackMinStepS,
    CAPS.trackMaxStepS,
    `Seconds between points (default ${CAPS.trackDefaultStepS}). At most ${CAPS.trackMaxPoints} points per answer.`,
    `a number of seconds from ${CAPS.trackMinStepS} to ${CAPS.trackMaxStepS}`,
  ).optional(),
  format: expects(z.enum(['json', 'geojson']), 'json or geojson').default('json').meta({ description: 'json (points) or geojson (a FeatureCollection whose line is split at the antimeridian, RFC 7946 section 3.1.9).' }),
});

export const positionQuery = z.object({
  at: isoTime('Time of the position. Default: now.').optional(),
});

export const positionsQuery = z.object({
  ids: expects(
    z
      .string()
      .max(CAPS.positionsMaxIds * 41)
      .transform((v, ctx) => {
        const ids = [...new Set(v.split(',').map((s) => s.trim()).filter(Boolean))];
        const quote = (x: string) => `'${x.length > 40 ? `${x.slice(0, 37)}\u2026` : x}'`;
        const bad = ids.filter((id) => !SATELLITE_ID.test(id));
        const showsValue = { showsValue: true };
        if (ids.length === 0) ctx.addIssue({ code: 'custom', message: `names no satellite id; give comma-separated satellite ids (at most ${CAPS.positionsMaxIds})` });
        else if (ids.length > CAPS.positionsMaxIds) ctx.addIssue({ code: 'custom', message: `holds ${ids.length} ids; at most ${CAPS.positionsMaxIds} per request`, params: showsValue });
        else if (bad.length > 0) {
          ctx.addIssue({ code: 'custom', message: `holds ${bad.length === 1 ? 'a value that is' : 'values that are'} not a satellite id: ${bad.slice(0, 3).map(quote).join(', ')}`, params: showsValue });
        }
        else return ids;
        return z.NEVER;
      })
      .meta({ description: `Comma-separated satellite ids, at most ${CAPS.positionsMaxIds}.`, example: 'sat_abc,sat_def' }),
    `comma-separated satellite ids (at most ${CAPS.positionsMaxIds})`,
  ),
  at: isoTime('Time of the positions. Default: now.').optional(),
});

/** One window for many satellites: the ids of /positions (same cap) with the window of /track. */
export const tracksQuery = z.object({
  ids: positionsQuery.shape.ids,
  start: trackQuery.shape.start,
  end: isoTime(`Last point at or before this time, the same for every satellite. Default: one orbital period of each satellite after start. At most ${CAPS.trackMaxWindowS / 3600} h after start.`).optional(),
  step: trackQuery.shape.step,
});

export const passesQuery = z.object({
  lat: num(-90, 90, 'Observer latitude, degrees north (WGS-84).', 'the observer\u2019s latitude, a number of degrees from -90 to 90'),
  lon: num(-180, 180, 'Observer longitude, degrees east.', 'the observer\u2019s longitude, a number of degrees from -180 to 180'),
  altM: num(-500, 9_000, 'Observer height above the ellipsoid, metres (default 0).', 'the observer\u2019s height, a number of metres from -500 to 9000').default(0),
  start: isoTime('Start of the search. Default: now.').optional(),
  days: num(
    0.01,
    CAPS.passesMaxDays,
    `Length of the search, days (default ${CAPS.passesDefaultDays}, at most ${CAPS.passesMaxDays}).`,
    `a number of days from 0.01 to ${CAPS.passesMaxDays}`,
  ).default(CAPS.passesDefaultDays),
  minElevation: num(0, 89, `Elevation mask, degrees (default ${CAPS.passesDefaultMinElevationDeg}).`, 'an elevation mask, a number of degrees from 0 to 89').default(
    CAPS.passesDefaultMinElevationDeg,
  ),
  path: expects(z.enum(['true', 'false']), 'true or false')
    .default('false')
    .transform((v) => v === 'true')
    .meta({
      description: `true adds each pass's path across the sky: points every ${CAPS.skyPathStepS} s from rise to set (coarser for long passes, at most ${CAPS.skyPathMaxPoints} points), each with azimuth, elevation, sunlit and dark (the observer's Sun below -6 deg).`,
    }),
});

export const passesIcsQuery = z.object({
  lat: passesQuery.shape.lat,
  lon: passesQuery.shape.lon,
  altM: passesQuery.shape.altM,
  days: num(
    0.01,
    CAPS.calendarMaxDays,
    `Days ahead from now (default ${CAPS.calendarDefaultDays}, at most ${CAPS.calendarMaxDays}).`,
    `a number of days from 0.01 to ${CAPS.calendarMaxDays}`,
  ).default(CAPS.calendarDefaultDays),
  minElevation: passesQuery.shape.minElevation,
  visible: expects(z.enum(['true', 'false']), 'true or false')
    .default('false')
    .transform((v) => v === 'true')
    .meta({ description: 'true keeps only passes visible to the eye (satellite sunlit while the observer’s sky is dark).' }),
});

export const createSatelliteBody = expects(
  z.object({
    name: expects(z.string().trim().min(1).max(200).meta({ description: 'Display name.' }), 'the satellite\u2019s display name, 1 to 200 characters'),
    elements: expects(
      z.string().max(CAPS.uploadMaxBytes).optional().meta({ description: `Element set text: TLE (two or three lines), OMM KVN, OMM XML or OMM JSON, one or many sets, at most ${CAPS.uploadMaxBytes / 1024 / 1024} MiB. Optional: without it the satellite waits for an upload.` }),
      'element-set text (a TLE, or OMM as KVN, XML or JSON) in one JSON string',
    ),
    description: expects(z.string().max(5_000).optional().meta({ description: 'Free text shown with the satellite, at most 5000 characters (default empty).' }), 'text of at most 5000 characters'),
  }).meta({ description: 'The satellite to register: its name, and optionally its first element sets and a description' }),
  'a JSON object with name and elements',
);

// ---------------------------------------------------------------------------------------------
// Response shapes (documentation; the handlers build these objects). Every field carries a
// description: /docs/api shows it and tests/integration/api-reference.spec.ts refuses a blank one.

/** A time in an answer, ISO 8601 UTC; `what` says which time. */
const time = (what: string) => z.string().meta({ format: 'date-time', description: `${what}; ISO 8601, UTC` });

const RE_KM = EARTH_RADIUS_WGS84_KM;
/** How geodetic coordinates come out of SGP4, said once for every position field. */
const GEODETIC_NOTE = 'SGP4 gives the position in TEME; it is turned to Earth-fixed by Greenwich mean sidereal time (UTC taken as UT1, polar motion ignored) and then to WGS-84 geodetic coordinates';
const SUNLIT_TEXT = `true when the satellite sees the centre of the Sun: the line from it to the Sun misses a spherical Earth of radius ${RE_KM} km (the middle of the penumbra)`;
const STALENESS_TEXT = `fresh: the epoch lies less than ${FRESH_MAX_AGE_DAYS} days from the answer's time (either side); aging: less than ${AGING_MAX_AGE_DAYS} days; stale: ${AGING_MAX_AGE_DAYS} days or more`;
const AZIMUTH_TEXT = 'deg clockwise from true north, 0 to 360 (2 decimals)';
const ELEMENT_SET_ID = 'Element set id (es_…), as GET /v1/satellites/{id}/element-sets lists it';
const SET_EPOCH = 'Epoch of the element set, to the microsecond';

/** What every continuity check says, whether or not the figures could be computed. */
const continuityCommon = {
  summary: z.string().meta({ description: 'The classification in words: "continues the orbit", "orbit raised or lowered (manoeuvre likely)", "does not continue (check the catalog number and the source)" or "not checked"' }),
  reason: z.string().meta({ description: 'One sentence on why, with the deciding figure and its tolerance; for not-checked, why the previous set could not be carried to this epoch' }),
  previousElementSetId: z.string().meta({ description: 'Id of the set compared with: the usable set (not held for confirmation) with the latest epoch before this one' }),
  previousEpoch: time('Epoch of the previous set'),
  spanDays: z.number().meta({ description: 'This epoch minus the previous set\u2019s, days (4 decimals)' }),
};

/**
 * The continuity check stored with a set: with its figures when the previous set could be carried
 * to this epoch, else `not-checked` with the reason only. The server writes it
 * (services/satellites.ts continuityOf, from the engine's ContinuityReport), the console reads it.
 */
export const continuitySchema = z
  .discriminatedUnion('classification', [
    z
      .object({
        classification: z.enum(['continues', 'manoeuvre', 'does-not-continue']).meta({
          description:
            'Checked in this order: does-not-continue when the catalog number changed or the orbit plane moved (inclination or RAAN beyond tolerance); manoeuvre when the plane holds but the semi-major axis or eccentricity changed beyond what drag explains over the span; continues when the previous prediction lies within the position tolerance (it grows with the span); else does-not-continue',
        }),
        ...continuityCommon,
        positionDifferenceKm: z.number().meta({ description: 'Distance between the previous set\u2019s SGP4 prediction and this set at this epoch (TEME), km, 3 decimals' }),
        radialKm: z.number().meta({ description: 'Radial part of that difference (previous minus this, along this set\u2019s position vector), km, 3 decimals' }),
        alongTrackKm: z.number().meta({ description: 'Along-track part of the difference (completing the radial / along-track / cross-track triad of this set), km, 3 decimals' }),
        crossTrackKm: z.number().meta({ description: 'Cross-track part of the difference (along this set\u2019s orbit normal, r × v), km, 3 decimals' }),
        alongTrackTimingS: z.number().meta({ description: 'Along-track difference as time (km over this set\u2019s speed), s, 2 decimals; positive: the previous prediction runs ahead' }),
        semiMajorAxisChangeKm: z.number().meta({ description: 'Semi-major axis (from mean motion, two-body) of this set minus the previous set\u2019s, km, 3 decimals' }),
        eccentricityChange: z.number().meta({ description: 'Mean eccentricity of this set minus the previous set\u2019s (7 decimals)' }),
        inclinationChangeDeg: z.number().meta({ description: 'Mean inclination of this set minus the previous set\u2019s, deg (4 decimals)' }),
        raanChangeDeg: z.number().meta({ description: 'RAAN of this set minus the previous RAAN carried to this epoch by SGP4\u2019s secular node rate, deg in (-180, 180] (4 decimals)' }),
        catalogNumberChanged: z.boolean().meta({ description: 'true when both sets name a catalog number and the numbers differ' }),
      })
      .meta({ description: 'The previous set could be carried to this epoch: the figures of the comparison' }),
    z
      .object({ classification: z.literal('not-checked').meta({ description: 'not-checked: SGP4 could not carry the previous set to this epoch (for example more than 365 days away)' }), ...continuityCommon })
      .meta({ description: 'The comparison could not be made: no figures, the reason says why' }),
  ])
  .meta({ description: 'The previous set (by epoch) propagated to this set\u2019s epoch and compared with it; parts in the radial / along-track / cross-track frame of this set' });

export const elementSetSummarySchema = z.object({
  id: z.string().meta({ description: ELEMENT_SET_ID }),
  source: z.enum(['tle', 'omm-kvn', 'omm-xml', 'omm-json', 'kepler']).meta({ description: 'The format the set was read from; kepler: Keplerian elements entered in the console' }),
  epoch: time(SET_EPOCH),
  ageDays: z.number().meta({ description: 'Age of the set at the time of the answer (that time minus the epoch), days, 3 decimals; negative for an epoch in the future' }),
  staleness: z.enum(['fresh', 'aging', 'stale']).meta({ description: STALENESS_TEXT }),
  uploadedBy: z.string().nullable().meta({ description: 'Who stored the set: a member\u2019s name, or "key <name>" for an upload with a server key (as the console shows it); null in answers to browser keys and embeds, and when no uploader is recorded or it no longer exists' }),
  createdAt: time('When the set was stored'),
  catalogNumber: z.string().meta({ description: 'Catalog number the set names, as a decimal string such as "25544"; empty when it names none' }),
  name: z.string().meta({ description: 'Object name written in the set (TLE line 0 or OMM OBJECT_NAME); may be empty' }),
  continuity: continuitySchema.nullable().meta({ description: 'The continuity check made when the set arrived; null for a satellite\u2019s first set' }),
  awaitingConfirmation: z.boolean().meta({ description: 'Held until an editor confirms it (organization setting); not used for any answer meanwhile' }),
});

/** The element set an answer was computed from, with its age at the answer's time. */
export const elementSetRefSchema = z.object({
  id: z.string().meta({ description: ELEMENT_SET_ID }),
  epoch: time(SET_EPOCH),
  ageDays: z.number().meta({ description: 'Age of the set at the answer\u2019s time (a track part\u2019s or pass window\u2019s start), days (4 decimals); negative before the epoch' }),
});

export const derivedSchema = z.object({
  epoch: time('Epoch of the current element set, to the microsecond'),
  semiMajorAxisKm: z.number().meta({ description: `Semi-major axis from the set\u2019s mean motion by the two-body relation (μ = ${MU_WGS84_KM3_S2} km³/s²), km` }),
  eccentricity: z.number().meta({ description: 'Mean eccentricity of the set, 0 (circular) to below 1' }),
  inclinationDeg: z.number().meta({ description: 'Mean inclination of the orbit to the equator, deg, 0 to 180 (above 90: retrograde)' }),
  raanDeg: z.number().meta({ description: 'Right ascension of the ascending node at epoch, deg, as in the set (TEME, the frame of SGP4)' }),
  argPerigeeDeg: z.number().meta({ description: 'Argument of perigee at epoch, deg, as in the set' }),
  meanAnomalyDeg: z.number().meta({ description: 'Mean anomaly at epoch, deg, as in the set' }),
  meanMotionRevPerDay: z.number().meta({ description: 'Mean motion of the set (the Kozai mean motion of a TLE or OMM), revolutions per day' }),
  periodMin: z.number().meta({ description: 'Orbital period, minutes: 1440 / meanMotionRevPerDay' }),
  apogeeAltKm: z.number().meta({ description: `Apogee height, km: semiMajorAxisKm × (1 + eccentricity) minus the WGS-84 equatorial radius ${RE_KM} km (mean elements; not the height above the ellipsoid at a place)` }),
  perigeeAltKm: z.number().meta({ description: `Perigee height, km: semiMajorAxisKm × (1 - eccentricity) minus the WGS-84 equatorial radius ${RE_KM} km (mean elements; not the height above the ellipsoid at a place)` }),
  nodalPrecessionDegPerDay: z.number().meta({ description: 'J2 secular drift of the ascending node, deg/day: -1.5 J2 (Re / p)² n cos i; negative (westward) for prograde orbits, about +0.9856 for a Sun-synchronous one' }),
  westwardShiftPerRevDeg: z.number().meta({ description: 'How far west the next equator crossing of the ground track lies, deg per revolution, taken into (-180, 180]: about 0 for a geostationary track, about 180 for a 12-hour orbit; negative: the crossing moves east' }),
  latitudeLimitDeg: z.number().meta({ description: 'Highest latitude the ground track reaches, deg: the inclination, or 180 minus it for a retrograde orbit' }),
  ageDays: z.number().meta({ description: 'Age of the set at the time of the answer (that time minus the epoch), days; negative for an epoch in the future' }),
  stale: z.boolean().meta({ description: 'true when staleness is stale' }),
  staleness: z.enum(['fresh', 'aging', 'stale']).meta({ description: STALENESS_TEXT }),
});

export const satelliteSchema = z.object({
  id: z.string().meta({ description: 'Satellite id (sat_…), the {id} of every /v1/satellites/{id} route' }),
  name: z.string().meta({ description: 'Display name given when the satellite was registered' }),
  catalogNumber: z.string().nullable().meta({ description: 'Catalog number, taken from the first uploaded set that names one (sets entered as Keplerian elements excepted); null until then. A later set with another number is refused (catalog-mismatch)' }),
  description: z.string().meta({ description: 'Free text given at registration; empty when none' }),
  current: elementSetSummarySchema.nullable().meta({ description: 'The current element set: the usable set (not held for confirmation) with the latest epoch; null before the first upload' }),
  derived: derivedSchema.nullable().meta({ description: 'Derived elements of the current set, as GET /v1/satellites/{id}/elements answers them; null before the first upload' }),
});

export const positionSchema = z.object({
  t: time('Time of the position: `at`, or the time of the request'),
  lat: z.number().meta({ description: `Geodetic latitude (WGS-84) of the sub-satellite point, deg, -90 to 90 (5 decimals). ${GEODETIC_NOTE}` }),
  lon: z.number().meta({ description: 'Longitude of the sub-satellite point, deg east in [-180, 180) (5 decimals)' }),
  altKm: z.number().meta({ description: 'Height above the WGS-84 ellipsoid, km (3 decimals)' }),
  speedKmS: z.number().meta({ description: 'Speed in SGP4\u2019s inertial TEME frame, km/s (4 decimals); not the speed over the ground' }),
  footprintRadiusKm: z.number().meta({ description: `Radius of the footprint: distance over a spherical Earth (radius ${RE_KM} km) from the sub-satellite point to where the satellite stands on the horizon (0 deg elevation), km (1 decimal)` }),
  sunlit: z.boolean().meta({ description: SUNLIT_TEXT }),
  elementSet: elementSetRefSchema.meta({ description: 'The set in force at t: the latest epoch at or before t, else the earliest set' }),
});

export const trackPointSchema = z.object({
  t: time('Time of the point: start + k × stepS'),
  lat: z.number().meta({ description: `Geodetic latitude (WGS-84) of the sub-satellite point, deg (5 decimals). ${GEODETIC_NOTE}` }),
  lon: z.number().meta({ description: 'Longitude of the sub-satellite point, deg east in [-180, 180) (5 decimals); the track jumps at ±180, format=geojson splits it there' }),
  altKm: z.number().meta({ description: 'Height above the WGS-84 ellipsoid, km (3 decimals)' }),
  sunlit: z.boolean().meta({ description: `${SUNLIT_TEXT}; the Sun\u2019s direction is taken afresh every 10 minutes of the track` }),
});
export const trackSchema = z.object({
  satelliteId: z.string().meta({ description: 'The satellite id asked for' }),
  elementSetId: z.string().meta({ description: 'The set in force at start (the first part\u2019s)' }),
  elementSet: elementSetRefSchema.meta({ description: 'The set in force at start, with its age there' }),
  parts: z
    .array(
      z.object({
        elementSet: elementSetRefSchema.meta({ description: 'The set this part\u2019s points come from, with its age at the part\u2019s first point' }),
        start: time('Time of the part\u2019s first point'),
        end: time('Time of the part\u2019s last point'),
        firstIndex: z.number().int().meta({ description: 'Index in points of the part\u2019s first point (0 for the first part)' }),
        count: z.number().int().meta({ description: 'Number of points in the part' }),
      }),
    )
    .meta({ description: 'The track split where the set in force changes: points[firstIndex ..< firstIndex + count] come from elementSet. One part when one set covers the window.' }),
  start: time('Time of the first point: start as asked, or now rounded down to the minute'),
  end: time('Time of the last point: the last start + k × stepS at or before the end asked for (or the default end)'),
  stepS: z.number().meta({ description: `Seconds between consecutive points: step as asked, default ${CAPS.trackDefaultStepS}` }),
  count: z.number().int().meta({ description: `Number of points: floor((end - start) / stepS) + 1, at most ${CAPS.trackMaxPoints}` }),
  points: z.array(trackPointSchema).meta({ description: 'The ground track: one point every stepS seconds from start to end, in time order' }),
});

export const trackErrorSchema = z.object({
  code: z.string().meta({ description: 'The problem code the one-satellite track route would answer (not-found, no-element-set, decayed, propagation-failed)' }),
  status: z.number().int().meta({ description: 'The HTTP status that route would answer' }),
  detail: z.string().meta({ description: 'A sentence for people' }),
});
export const tracksSchema = z.object({
  start: time('Start of the window, the same for every satellite: start as asked, or now rounded down to the minute'),
  stepS: z.number().meta({ description: `Seconds between points, the same for every track (default ${CAPS.trackDefaultStepS})` }),
  tracks: z
    .array(
      z.union([
        trackSchema.extend({ name: z.string().meta({ description: 'Display name of the satellite' }) }).meta({ description: 'A computed track: the GET /v1/satellites/{id}/track answer for this id, with the satellite\u2019s name' }),
        z
          .object({
            satelliteId: z.string().meta({ description: 'The id as asked' }),
            name: z.string().nullable().meta({ description: 'Display name of the satellite; null when the id names no satellite this key may see' }),
            error: trackErrorSchema.meta({ description: 'Why this id has no track' }),
          })
          .meta({ description: 'An id whose track could not be given; the other ids are still answered' }),
      ]),
    )
    .meta({ description: 'One entry per distinct id, in the order asked' }),
});

const passPoint = (what: string) =>
  z.object({ t: time(`Time of the ${what}`), azimuth: z.number().meta({ description: `Azimuth at ${what}, ${AZIMUTH_TEXT}` }) });
export const passSchema = z.object({
  rise: passPoint('rise').meta({ description: 'Where and when the satellite climbs above the elevation mask (minElevation); the window start when inProgressAtStart' }),
  culmination: z
    .object({
      t: time('Time of the highest elevation'),
      azimuth: z.number().meta({ description: `Azimuth at the highest elevation, ${AZIMUTH_TEXT}` }),
      elevation: z.number().meta({ description: 'Highest elevation above the observer\u2019s geodetic horizon, deg, without atmospheric refraction (2 decimals)' }),
      rangeKm: z.number().meta({ description: 'Distance from the observer to the satellite at that moment, km (1 decimal)' }),
    })
    .meta({ description: 'The highest point of the pass' }),
  set: passPoint('set').meta({ description: 'Where and when the satellite sinks below the elevation mask; the window end when inProgressAtEnd' }),
  visible: z.boolean().meta({ description: `Sunlit satellite while the observer is in darkness (Sun below ${CIVIL_TWILIGHT_DEG} deg) at some moment of the pass` }),
  inProgressAtStart: z.boolean().meta({ description: 'The pass was already under way at the window start: rise is the start, not a true rise' }),
  inProgressAtEnd: z.boolean().meta({ description: 'The pass was still under way at the window end: set is the end, not a true set' }),
  path: z
    .array(
      z.object({
        t: time('Time of the point'),
        azimuth: z.number().meta({ description: `Azimuth, ${AZIMUTH_TEXT}` }),
        elevation: z.number().meta({ description: 'Elevation above the observer\u2019s geodetic horizon, deg, without refraction (2 decimals)' }),
        sunlit: z.boolean().meta({ description: SUNLIT_TEXT }),
        dark: z.boolean().meta({ description: `The observer\u2019s Sun is below ${CIVIL_TWILIGHT_DEG} deg (civil twilight or darker)` }),
      }),
    )
    .optional()
    .meta({ description: `Only with path=true: the pass across the sky every ${CAPS.skyPathStepS} s from rise to set (coarser for long passes, at most ${CAPS.skyPathMaxPoints} points)` }),
});
export const passesSchema = z.object({
  satelliteId: z.string().meta({ description: 'The satellite id asked for' }),
  elementSet: elementSetRefSchema.meta({ description: 'The set in force at start; passes are searched within it (and within the next sets when the window spans several)' }),
  elementSets: z.array(elementSetRefSchema).meta({ description: 'Every set the window used, in time order, each with its age where its part of the window begins' }),
  observer: z
    .object({
      lat: z.number().meta({ description: 'Latitude as asked, deg north (WGS-84 geodetic)' }),
      lon: z.number().meta({ description: 'Longitude as asked, deg east' }),
      altM: z.number().meta({ description: 'Height above the WGS-84 ellipsoid as asked, m' }),
    })
    .meta({ description: 'The observer the passes are for' }),
  start: time('Start of the search: start as asked, or the time of the request'),
  end: time('End of the search: start + days'),
  minElevation: z.number().meta({ description: 'The elevation mask used, deg' }),
  alwaysUp: z.boolean().meta({ description: 'true when the satellite stays above the mask for the whole window (for example a geostationary satellite in view); passes is then empty' }),
  passes: z.array(passSchema).meta({ description: 'Passes in the window, in time order; one cut by the window\u2019s start or end is flagged inProgressAtStart or inProgressAtEnd' }),
});

export const reportEntrySchema = z.object({
  index: z.number().int().meta({ description: '1-based position of the set in its text or file' }),
  line: z.number().int().meta({ description: '1-based line where the set starts in its text or file; for a refused set, the line of the problem when the parser names one' }),
  ok: z.boolean().meta({ description: 'true when the set is usable: stored now, or stored already (duplicate)' }),
  elementSetId: z.string().optional().meta({ description: 'Id of the stored set; for a duplicate, the set stored earlier with this epoch' }),
  duplicate: z.boolean().optional().meta({ description: 'true when the satellite already had a set with this epoch: nothing new was stored' }),
  code: z.string().optional().meta({ description: 'Why the set was refused: a parser code (empty, structure, layout, format, range, checksum, mismatch, missing, duplicate, unknown-keyword, units, unsupported, syntax, conflict), catalog-mismatch, or sgp4-<engine code> when SGP4 cannot use the set' }),
  field: z.string().optional().meta({ description: 'The field at fault: Nadirline\u2019s name or the format\u2019s keyword (eccentricity, MEAN_MOTION, checksum, catalogNumber, elements, ...)' }),
  message: z.string().optional().meta({ description: 'What is wrong with that field, in words' }),
  column: z.number().int().optional().meta({ description: '1-based column of the problem, where the format has columns' }),
  file: z.string().optional().meta({ description: 'Name of the uploaded file the set came from (multipart uploads)' }),
  continuity: continuitySchema.nullable().optional().meta({ description: 'For a newly stored set: its continuity check (null when the satellite had no earlier set)' }),
  awaitingConfirmation: z.boolean().optional().meta({ description: 'The set is held until an editor confirms it (organization setting)' }),
});
export const uploadSchema = z.object({
  detail: z.string().meta({ description: 'One sentence: how many sets were stored, were stored already, or could not be used' }),
  elementSet: elementSetSummarySchema
    .extend({ elements: z.record(z.string(), z.unknown()).meta({ description: 'The set as parsed, in the engine\u2019s names: source, name, catalogNumber, classification, intlDesignator, epochMs (Unix ms), epochIso, meanMotionRevPerDay, eccentricity, inclinationDeg, raanDeg, argPerigeeDeg, meanAnomalyDeg, bstar (1/earth radii), meanMotionDot (rev/day², divided by 2), meanMotionDdot (rev/day³, divided by 6), ephemerisType, elementSetNo, revAtEpoch' }) })
    .nullable()
    .meta({ description: 'The first set stored by this request; null when nothing new was stored' }),
  elementSets: z.array(elementSetSummarySchema).meta({ description: 'Every set stored by this request' }),
  accepted: z.number().int().meta({ description: 'Sets stored by this request (the length of elementSets)' }),
  duplicates: z.number().int().meta({ description: 'Usable sets whose epoch this satellite had already: nothing new was written for them' }),
  rejected: z.number().int().meta({ description: 'Sets that could not be used; their report entries say why' }),
  report: z.array(reportEntrySchema).meta({ description: 'One entry per set found in the body or the files, in order' }),
});

/** Problem details (RFC 9457); extension members besides these may appear (reason, missing, limitBytes, file, report, ...). */
export const problemSchema = z.looseObject({
  type: z.string().meta({ description: 'The problem type: /docs/problems#<code>, the page that explains the code' }),
  title: z.string().meta({ description: 'Short title of the problem type, the same for every problem with this code' }),
  status: z.number().int().meta({ description: 'The HTTP status of the response' }),
  detail: z.string().meta({ description: 'A sentence for people: what went wrong and what to do' }),
  code: z.string().meta({ description: 'Stable problem code for programs (see /docs/problems)' }),
  instance: z.string().optional().meta({ description: 'The request path, without its query string' }),
  errors: z
    .array(
      z.object({
        where: z.string().meta({ description: 'query.<name>, body.<field>, or a file, line and column' }),
        message: z.string().meta({ description: 'A sentence naming the field, what it expects and what came' }),
        line: z.number().int().optional().meta({ description: '1-based line in the submitted text' }),
        column: z.number().int().optional().meta({ description: '1-based column in the submitted text' }),
        field: z.string().optional().meta({ description: 'The query parameter, body field or element-set field at fault' }),
      }),
    )
    .optional()
    .meta({ description: 'With validation-failed and unprocessable-element-set: one entry per problem, naming where it is' }),
});

export const embedSchema = z.object({
  id: z.string().meta({ description: 'Embed id (12 letters and digits), the embed attribute of the snippet' }),
  name: z.string().meta({ description: 'Name given to the embed in the console' }),
  satellites: z.array(z.string()).meta({ description: 'Ids of the satellites the embed shows, in order; reads with this embed see only these' }),
  options: z.record(z.string(), z.unknown()).meta({
    description: 'Widget settings saved in the console\u2019s embed builder: projection (equal-earth or globe), orbitsBehind and orbitsAhead (0 to 10 orbits), observer ("lat,lon[,altM]" or auto), layers, theme (light, dark or auto), timeZone, locale, width and height (CSS lengths); other settings may appear',
  }),
});

// ---------------------------------------------------------------------------------------------
// Route table.

export type Access = 'public' | 'read' | 'write';

export interface RouteSpec {
  method: 'get' | 'post';
  /** OpenAPI path below /v1, e.g. "/satellites/{id}/track". */
  path: string;
  operationId: string;
  summary: string;
  description?: string;
  access: Access;
  query?: z.ZodType;
  /** JSON body schema (others are described in requestBodies). */
  body?: z.ZodType;
  /** Non-JSON request bodies accepted (media type -> description). */
  bodies?: Record<string, string>;
  responses: Record<string, { description: string; schema?: z.ZodType; mediaTypes?: string[] }>;
  /** Problem codes this route may answer besides the auth and limit ones. */
  problems?: string[];
}

export const V1_ROUTES: RouteSpec[] = [
  {
    method: 'get',
    path: '/satellites',
    operationId: 'listSatellites',
    summary: 'Satellites this key may see',
    access: 'read',
    responses: { '200': { description: 'The satellites', schema: z.object({ satellites: z.array(satelliteSchema).meta({ description: 'The satellites of the key\u2019s organization, by name; with an embed, only the embed\u2019s satellites' }) }) } },
  },
  {
    method: 'get',
    path: '/satellites/{id}',
    operationId: 'getSatellite',
    summary: 'One satellite, its current element set summary and derived elements',
    access: 'read',
    responses: { '200': { description: 'The satellite', schema: satelliteSchema } },
    problems: ['not-found'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/track',
    operationId: 'getTrack',
    summary: 'Ground track over a window',
    description: `Points every \`step\` seconds from \`start\` to \`end\`, each from the element set in force at its time (the latest epoch at or before it, else the earliest set); \`parts\` says where the set changes. Times further than ${CAPS.maxDaysFromEpoch} days from the epoch of the set in force answer 422 propagation-failed (reason too-far-from-epoch). Caps: window at most ${CAPS.trackMaxWindowS / 3600} h, at most ${CAPS.trackMaxPoints} points, step ${CAPS.trackMinStepS} to ${CAPS.trackMaxStepS} s. Answers carry an ETag; windows whose start and end are whole multiples of ${CAPS.trackCacheQuantumS} s are publicly cacheable.`,
    access: 'read',
    query: trackQuery,
    responses: {
      '200': { description: 'The track (application/json) or a GeoJSON FeatureCollection (application/geo+json)', schema: trackSchema, mediaTypes: ['application/json', 'application/geo+json'] },
      '304': { description: 'Not modified (If-None-Match matched the ETag)' },
    },
    problems: ['not-found', 'validation-failed', 'no-element-set', 'decayed', 'propagation-failed'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/position',
    operationId: 'getPosition',
    summary: 'Position at one time',
    description: `From the element set in force at \`at\` (the latest epoch at or before it, else the earliest set), named in \`elementSet\`. More than ${CAPS.maxDaysFromEpoch} days from that set's epoch answers 422 propagation-failed (reason too-far-from-epoch).`,
    access: 'read',
    query: positionQuery,
    responses: { '200': { description: 'The position', schema: positionSchema.extend({ satelliteId: z.string().meta({ description: 'The satellite id asked for' }) }) } },
    problems: ['not-found', 'validation-failed', 'no-element-set', 'decayed', 'propagation-failed'],
  },
  {
    method: 'get',
    path: '/positions',
    operationId: 'getPositions',
    summary: 'Positions of several satellites at one time',
    description: `At most ${CAPS.positionsMaxIds} ids, each from its element set in force at \`at\`. A satellite whose position cannot be computed appears with an \`error\` instead of coordinates.`,
    access: 'read',
    query: positionsQuery,
    responses: {
      '200': {
        description: 'One entry per id, in the order asked',
        schema: z.object({
          t: time('Time of every position: at as asked, or the time of the request'),
          positions: z
            .array(
              z.union([
                positionSchema
                  .extend({ id: z.string().meta({ description: 'The satellite id as asked' }), name: z.string().meta({ description: 'Display name of the satellite' }) })
                  .meta({ description: 'A satellite whose position was computed' }),
                z
                  .object({
                    id: z.string().meta({ description: 'The satellite id as asked' }),
                    name: z.string().meta({ description: 'Display name of the satellite' }),
                    error: z
                      .object({
                        code: z.string().meta({ description: 'The problem code the one-satellite position route would answer (no-element-set, decayed, propagation-failed)' }),
                        detail: z.string().meta({ description: 'A sentence for people' }),
                      })
                      .meta({ description: 'Why this satellite has no position' }),
                  })
                  .meta({ description: 'A satellite whose position could not be computed; the others are still answered' }),
              ]),
            )
            .meta({ description: 'One entry per distinct id, in the order asked' }),
        }),
      },
    },
    problems: ['not-found', 'validation-failed'],
  },
  {
    method: 'get',
    path: '/tracks',
    operationId: 'getTracks',
    summary: 'Ground tracks of several satellites over one window',
    description: `One request, counted once against the rate limit and the quota, for the same window of up to ${CAPS.tracksMaxIds} satellites: each id gets the answer of \`GET /v1/satellites/{id}/track\` (same caps per track; at most ${CAPS.tracksMaxPoints} points in all), in the order asked. An id this key may not see, or whose track cannot be computed, gets an \`error\` with the code and status the one-satellite route would answer, and the others are still answered. Answers carry an ETag; windows whose start and end are whole multiples of ${CAPS.trackCacheQuantumS} s are publicly cacheable.`,
    access: 'read',
    query: tracksQuery,
    responses: {
      '200': { description: 'One entry per id, in the order asked', schema: tracksSchema },
      '304': { description: 'Not modified (If-None-Match matched the ETag)' },
    },
    problems: ['validation-failed'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/passes',
    operationId: 'getPasses',
    summary: 'Passes over an observer',
    description: `Rise, culmination and set above the elevation mask, for up to ${CAPS.passesMaxDays} days, from the element sets in force over the window (\`elementSets\`). \`path=true\` adds each pass's sky path every ${CAPS.skyPathStepS} s (at most ${CAPS.skyPathMaxPoints} points). More than ${CAPS.maxDaysFromEpoch} days from a set's epoch answers 422 propagation-failed (reason too-far-from-epoch). Observing advice: never point optics at or near the Sun.`,
    access: 'read',
    query: passesQuery,
    responses: { '200': { description: 'The passes', schema: passesSchema } },
    problems: ['not-found', 'validation-failed', 'no-element-set', 'decayed', 'propagation-failed'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/passes.ics',
    operationId: 'getPassCalendar',
    summary: 'Passes over an observer as an iCalendar document (RFC 5545)',
    description: `One VEVENT per pass from now for \`days\` (default ${CAPS.calendarDefaultDays}, at most ${CAPS.calendarMaxDays}): DTSTART at rise, DTEND at set (UTC), a UID that stays the same for the satellite, the observer and the rise minute (a subscribed calendar updates its events instead of adding copies), a summary, and a description with the highest elevation, the directions and the cautions. \`visible=true\` keeps passes visible to the eye. Browser keys (\`?key=\`) and \`embed=\` work as for the other reads. Answers carry an ETag and may be cached for an hour (calendar apps poll). The calendar asks apps to refresh every 6 hours.`,
    access: 'read',
    query: passesIcsQuery,
    responses: {
      '200': {
        description: 'The calendar',
        schema: z.string().meta({ description: 'An iCalendar document (RFC 5545): VCALENDAR with one VEVENT per pass; lines end in CRLF and are folded at 75 octets' }),
        mediaTypes: ['text/calendar'],
      },
      '304': { description: 'Not modified (If-None-Match matched the ETag)' },
    },
    problems: ['not-found', 'validation-failed', 'no-element-set', 'decayed', 'propagation-failed'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/element-sets',
    operationId: 'listElementSets',
    summary: 'The history of element sets, newest epoch first, with continuity checks (server keys and console previews)',
    description: 'Every stored set with its summary, the continuity check made when it arrived, and the figures a history chart needs (apogee and perigee altitude, mean motion, inclination). Browser keys and embeds get 403 forbidden.',
    access: 'read',
    responses: {
      '200': {
        description: 'The history',
        schema: z.object({
          satelliteId: z.string().meta({ description: 'The satellite id asked for' }),
          currentElementSetId: z.string().nullable().meta({ description: 'Id of the current set (usable, latest epoch); null when there is none' }),
          elementSets: z
            .array(
              elementSetSummarySchema.extend({
                meanMotionRevPerDay: z.number().meta({ description: 'Mean motion of the set (Kozai, as written in it), revolutions per day' }),
                apogeeAltKm: z.number().meta({ description: `Apogee height of the set\u2019s mean orbit above the WGS-84 equatorial radius (${EARTH_RADIUS_WGS84_KM} km), km (3 decimals)` }),
                perigeeAltKm: z.number().meta({ description: `Perigee height of the set\u2019s mean orbit above the WGS-84 equatorial radius (${EARTH_RADIUS_WGS84_KM} km), km (3 decimals)` }),
                inclinationDeg: z.number().meta({ description: 'Mean inclination of the set, deg' }),
              }),
            )
            .meta({ description: 'Every stored set, newest epoch first, held sets included' }),
        }),
      },
    },
    problems: ['not-found', 'forbidden'],
  },
  {
    method: 'get',
    path: '/satellites/{id}/elements',
    operationId: 'getElements',
    summary: 'Derived orbital elements of the current element set',
    access: 'read',
    responses: { '200': { description: 'The derived elements', schema: derivedSchema } },
    problems: ['not-found', 'no-element-set'],
  },
  {
    method: 'post',
    path: '/satellites',
    operationId: 'createSatellite',
    summary: 'Register a satellite (server key with element-sets:write)',
    access: 'write',
    body: createSatelliteBody,
    responses: { '201': { description: 'The new satellite; `report` lists each submitted element set', schema: satelliteSchema.extend({ report: z.array(reportEntrySchema).meta({ description: 'One entry per set found in elements, in order; empty without elements' }) }) } },
    problems: ['bad-request', 'validation-failed', 'unsupported-media-type', 'unprocessable-element-set', 'payload-too-large'],
  },
  {
    method: 'post',
    path: '/satellites/{id}/element-sets',
    operationId: 'uploadElementSets',
    summary: 'Upload element sets (server key with element-sets:write)',
    description: `The body is the element set itself. A text or file may hold many sets; each gets a report entry. 201 when at least one set was stored; 200 when every usable set was stored already (same epoch); 422 with line and column when none was usable; 400 for an empty body or a form without files. Bodies and files up to ${CAPS.uploadMaxBytes / 1024 / 1024} MiB, at most ${CAPS.uploadMaxFiles} files.`,
    access: 'write',
    bodies: {
      'text/plain': 'TLE (two or three lines per set) or OMM KVN',
      'application/xml': 'OMM XML (one or many <omm> in an <ndm>)',
      'application/json': 'OMM JSON (one object or an array)',
      'multipart/form-data': 'files[]: files holding any of the above (format from the extension or the content)',
    },
    responses: {
      '201': { description: 'Stored; per-entry report', schema: uploadSchema },
      '200': { description: 'Every usable set was stored already (same epoch): accepted 0, duplicates counted, nothing new', schema: uploadSchema },
    },
    problems: ['bad-request', 'validation-failed', 'not-found', 'unprocessable-element-set', 'unsupported-media-type', 'payload-too-large'],
  },
  {
    method: 'get',
    path: '/embeds/{id}',
    operationId: 'getEmbed',
    summary: 'A saved embed (public: the embed id is its own read credential)',
    access: 'public',
    responses: { '200': { description: 'The embed', schema: embedSchema } },
    problems: ['not-found', 'origin-not-allowed'],
  },
  {
    method: 'get',
    path: '/openapi.json',
    operationId: 'getOpenApi',
    summary: 'This document',
    access: 'public',
    responses: { '200': { description: 'OpenAPI 3.1 document' } },
  },
];

/** "GET /v1/satellites/{id}/track" — the usage counter's endpoint name. */
export function routeTemplate(r: Pick<RouteSpec, 'method' | 'path'>): string {
  return `${r.method.toUpperCase()} /v1${r.path}`;
}

/** Express path of a spec path: {id} -> :id. */
export function expressPath(path: string): string {
  return path.replace(/\{([A-Za-z]+)\}/g, ':$1');
}

// ---------------------------------------------------------------------------------------------
// Answer types: what the server writes (routes/v1 builds its answers as these) and what the
// widget and other readers import, type-only.

export type V1ElementSetSummary = z.output<typeof elementSetSummarySchema>;
export type Continuity = z.output<typeof continuitySchema>;
export type V1Derived = z.output<typeof derivedSchema>;
export type V1Satellite = z.output<typeof satelliteSchema>;
export type V1SatelliteList = { satellites: V1Satellite[] };
export type V1Position = z.output<typeof positionSchema>;
export type V1SatellitePosition = V1Position & { satelliteId: string };
export type V1PositionsEntry = (V1Position & { id: string; name: string }) | { id: string; name: string; error: { code: string; detail: string } };
export type V1Positions = { t: string; positions: V1PositionsEntry[] };
export type V1TrackPoint = z.output<typeof trackPointSchema>;
export type V1Track = z.output<typeof trackSchema>;
export type V1Tracks = z.output<typeof tracksSchema>;
export type V1TracksEntry = V1Tracks['tracks'][number];
export type V1Pass = z.output<typeof passSchema>;
export type V1Passes = z.output<typeof passesSchema>;
export type V1ReportEntry = z.output<typeof reportEntrySchema>;
export type V1Upload = z.output<typeof uploadSchema>;
export type V1Problem = z.output<typeof problemSchema>;
export type V1Embed = z.output<typeof embedSchema>;
