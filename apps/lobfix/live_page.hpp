// The live map page of `lobfix live` (GET /): one self-contained HTML document with inline
// CSS, SVG and script and no outside address; it polls /fix.geojson and /status.
#pragma once

namespace lobfix_app {

/// The page, UTF-8 HTML.
const char* live_page_html();

}  // namespace lobfix_app
