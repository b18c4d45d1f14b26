/**
 * Security headers (helmet), configured once for each kind of answer:
 *
 *   securityHeaders(config, 'console')  console SPA pages and the dev mailbox: strict CSP (scripts,
 *                                       fonts, images and fetches from this origin only; inline
 *                                       <style> allowed because the widget's shadow-root styles and
 *                                       the live preview need it), not frameable by other sites.
 *   securityHeaders(config, 'api')      JSON answers of /api: nothing may load or frame them.
 *   securityHeaders(config, 'embed')    hosted embed pages /embed/:id: same as console but any site
 *                                       may frame them (that is their purpose).
 *
 * Not for /widget/* or /v1: those are read cross-origin by other sites (no CORP same-origin there).
 * HSTS and upgrade-insecure-requests only in production (plain http://localhost in development).
 */
import type { RequestHandler } from 'express';
import helmet from 'helmet';
import type { Config } from '../config.ts';

export type SecurityKind = 'console' | 'api' | 'embed';

export function securityHeaders(config: Pick<Config, 'isProduction'>, kind: SecurityKind): RequestHandler {
  const prod = config.isProduction;
  const pageDirectives = {
    defaultSrc: ["'self'"],
    baseUri: ["'self'"],
    scriptSrc: ["'self'"],
    styleSrc: ["'self'", "'unsafe-inline'"],
    imgSrc: ["'self'", 'data:', 'blob:'],
    fontSrc: ["'self'", 'data:'],
    connectSrc: ["'self'"],
    objectSrc: ["'none'"],
    formAction: ["'self'"],
    frameSrc: ["'self'"],
    frameAncestors: kind === 'embed' ? ['*'] : ["'self'"],
    scriptSrcAttr: ["'none'"],
    upgradeInsecureRequests: prod ? [] : null,
  };
  const apiDirectives = {
    defaultSrc: ["'none'"],
    frameAncestors: ["'none'"],
    baseUri: ["'none'"],
    formAction: ["'none'"],
    upgradeInsecureRequests: prod ? [] : null,
  };
  return helmet({
    contentSecurityPolicy: { useDefaults: false, directives: kind === 'api' ? apiDirectives : pageDirectives },
    strictTransportSecurity: prod ? { maxAge: 180 * 24 * 3600, includeSubDomains: false } : false,
    // Embeds are framed by other sites: no X-Frame-Options there (CSP frame-ancestors decides).
    xFrameOptions: kind === 'embed' ? false : kind === 'api' ? { action: 'deny' } : { action: 'sameorigin' },
    crossOriginResourcePolicy: { policy: 'same-origin' },
    crossOriginOpenerPolicy: { policy: 'same-origin' },
    referrerPolicy: { policy: 'strict-origin-when-cross-origin' },
  }) as unknown as RequestHandler;
}
