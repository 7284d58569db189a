// Package viewertest drives the web viewer that package tiles writes in a
// real headless Chromium (Debian's chromium, through chromedp): it renders
// the invented demo city and small synthetic maps, serves them from an
// httptest server on 127.0.0.1 and from file://, and checks what a reader
// would see and do — tiles load with no failed request and no console
// error, wheel, keyboard, touch and the compare divider move the view, the
// URL hash shares a view, the legend matches the map file, a dot's colour
// is on screen where the dot is, hostile labels stay text, the screenshot
// shows no seam along any tile boundary against the tiles stitched in Go,
// the map opens fitted beside a key that no control covers, and a map whose
// bounds cross 180° opens centred over it.
//
// The package has no code of its own, only tests. They skip when chromium
// is not installed, and fail then when STIPPLE_REQUIRE_TOOLS=1.
// STIPPLE_WRITE_SCREENSHOTS=1 also writes the viewer's screenshots to
// examples/screenshots/.
package viewertest
