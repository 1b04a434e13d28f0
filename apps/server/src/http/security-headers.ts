import type { RequestHandler } from "express";
import helmet from "helmet";
import type { Config } from "../config.ts";

/**
 * Security headers on every answer, pages and API alike (helmet). The content security policy lets the
 * console load only what the server itself serves: its scripts, stylesheets, self-hosted fonts and
 * images, and connections to the API and to the jog socket (the public origin's ws:/wss: form is listed
 * besides 'self' because browsers that predate CSP 3 do not count a WebSocket to the page's own host as
 * 'self'). Nothing inline, nothing evaluated from strings: React, react-three-fiber and uPlot set styles
 * through the CSSOM (element.style), which style-src does not govern, and the console tells zod not to
 * compile parsers with `new Function` (apps/console/src/lib/zod-jitless.ts). Checked by loading the built
 * console in Chromium (sign-in, drive, watch, replay, every page of each role): no violation reported.
 * No plugins, no <base> tricks, no framing by any site (frame-ancestors 'none', and X-Frame-Options for
 * older browsers), no MIME sniffing, no Referer sent to other sites. Plain http on loopback stays plain: no
 * upgrade-insecure-requests, and HSTS only when the public origin is https.
 */
export function securityHeaders(config: Config): RequestHandler {
  const socketOrigin = config.publicOrigin.replace(/^http/, "ws");
  const isHttps = config.publicOrigin.startsWith("https:");
  return helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'"],
        styleSrc: ["'self'"],
        imgSrc: ["'self'"],
        fontSrc: ["'self'"],
        connectSrc: ["'self'", socketOrigin],
        workerSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'none'"],
        formAction: ["'self'"],
        frameAncestors: ["'none'"],
      },
    },
    xFrameOptions: { action: "deny" },
    // Not "no-referrer": under it the Fetch standard has browsers send `Origin: null` on our own POSTs,
    // which the Origin check would refuse. "same-origin" sends no Referer to any other site.
    referrerPolicy: { policy: "same-origin" },
    xContentTypeOptions: true,
    // 180 days, this host only (common practice, no source): a site may still serve other hosts over http.
    strictTransportSecurity: isHttps ? { maxAge: 15_552_000, includeSubDomains: false } : false,
  });
}
