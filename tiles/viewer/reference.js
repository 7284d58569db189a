// stipple viewer, reference layers: place names, lines (roads, rivers) and
// areas (water, parks) from the map maker's own files, and the optional
// shading of each area by its diversity, which the render writes as a
// script beside the viewer (map-data.js names it). Layers with a key are
// listed in the key card. Areas and
// lines are drawn on two canvases, one under the dot tiles and one over
// them; labels are text elements over everything, placed again at every
// view: most important rank first, and a label whose box would overlap a
// label already placed is hidden (a greedy collision test on boxes).
// viewer.js calls window.stippleReferenceView(x, y, z, w, h) after each
// redraw with the view's centre in world units (0–1), its zoom and size.
(function () {
  "use strict";
  var map = window.stippleMap;
  if (!map || !map.reference) return;
  var mapEl = document.getElementById("st-map");
  if (!mapEl) return;
  var T = 256, MAXLAT = 85.0511287798066, PAD = 3;
  function wx(lon) { return (lon + 180) / 360; }
  function wy(lat) {
    var s = Math.sin(Math.max(-MAXLAT, Math.min(MAXLAT, lat)) * Math.PI / 180);
    return 0.5 - Math.log((1 + s) / (1 - s)) / (4 * Math.PI);
  }
  function line(pts) { return pts.map(function (p) { return [wx(p[0]), wy(p[1])]; }); }

  var layers = null, view = null, below, above, labelBox, labels = [];

  function canvas(cls) {
    var c = document.createElement("canvas");
    c.className = cls;
    c.setAttribute("aria-hidden", "true");
    var s = c.style;
    s.position = "absolute"; s.left = "0"; s.top = "0"; s.pointerEvents = "none";
    return c;
  }

  function setup() {
    var d = window.stippleReference;
    if (!d || !d.layers) return;
    layers = d.layers.map(function (l) {
      return {
        kind: l.kind, above: l.above, color: l.color, width: l.width || 0,
        lines: (l.lines || []).map(line),
        areas: (l.areas || []).map(function (poly) { return poly.map(line); }),
        labels: l.labels || [], key: l.key || "", keyTitle: l.keyTitle || ""
      };
    });
    keyBlock();
    below = canvas("st-ref st-ref-below");
    above = canvas("st-ref st-ref-above");
    mapEl.insertBefore(below, mapEl.firstChild);
    mapEl.appendChild(above);
    labelBox = document.createElement("div");
    labelBox.className = "st-ref-labels";
    labelBox.setAttribute("aria-hidden", "true");
    var bs = labelBox.style;
    bs.position = "absolute"; bs.left = "0"; bs.top = "0"; bs.right = "0"; bs.bottom = "0";
    bs.pointerEvents = "none"; bs.overflow = "hidden";
    mapEl.appendChild(labelBox);
    var ground = getComputedStyle(mapEl).backgroundColor || "#fff";
    var halo = "0 0 2px " + ground + ", 0 0 2px " + ground + ", 0 0 3px " + ground;
    layers.forEach(function (l) {
      l.labels.forEach(function (lb) {
        var el = document.createElement("span");
        el.className = "st-ref-label st-ref-rank" + Math.min(lb.rank, 3);
        el.textContent = lb.name;
        var s = el.style;
        s.position = "absolute"; s.left = "0"; s.top = "0"; s.whiteSpace = "nowrap";
        s.color = l.color; s.textShadow = halo; s.lineHeight = "1.15";
        s.fontSize = lb.rank <= 1 ? "17px" : lb.rank === 2 ? "14px" : "12px";
        s.fontWeight = lb.rank <= 2 ? "700" : "400";
        if (lb.rank <= 1) s.letterSpacing = "0.04em";
        s.visibility = "hidden";
        labelBox.appendChild(el);
        labels.push({ el: el, x: wx(lb.at[0]), y: wy(lb.at[1]), rank: lb.rank, w: 0, h: 0 });
      });
    });
    // Labels are written in placement order per layer; across layers the
    // rank decides, then the order written.
    labels.forEach(function (l, i) { l.i = i; });
    labels.sort(function (a, b) { return a.rank - b.rank || a.i - b.i; });
    measure();
    if (document.fonts && document.fonts.ready) document.fonts.ready.then(function () { measure(); draw(); });
    draw();
  }

  // Layers with a key (the diversity shading's classes) are listed in the
  // key card, after the dot legends: a heading per key title, then a
  // square swatch and label per layer. Folded, the card keeps them in one
  // wrapped row (viewer.css, .st-ref-key).
  function keyBlock() {
    var body = document.getElementById("st-key-body"), box = null, list = null, title = null;
    if (!body) return;
    layers.forEach(function (l) {
      if (!l.key) return;
      if (!box || l.keyTitle !== title) {
        box = document.createElement("div");
        box.className = "st-ref-key";
        var h = document.createElement("h2");
        h.className = "st-ref-key-title";
        h.textContent = l.keyTitle;
        list = document.createElement("ul");
        list.className = "st-groups";
        box.appendChild(h);
        box.appendChild(list);
        body.appendChild(box);
        title = l.keyTitle;
      }
      var li = document.createElement("li"), sw = document.createElement("span"), lb = document.createElement("span");
      sw.className = "st-swatch st-ref-swatch";
      sw.style.backgroundColor = l.color;
      lb.className = "st-label";
      lb.textContent = l.key;
      li.appendChild(sw);
      li.appendChild(lb);
      list.appendChild(li);
    });
  }

  function measure() {
    labels.forEach(function (l) { l.w = l.el.offsetWidth; l.h = l.el.offsetHeight; });
  }

  function paint(c, above, v) {
    var dpr = window.devicePixelRatio || 1;
    var pw = Math.round(v.w * dpr), ph = Math.round(v.h * dpr);
    if (c.width !== pw || c.height !== ph) { c.width = pw; c.height = ph; }
    c.style.width = v.w + "px"; c.style.height = v.h + "px";
    var g = c.getContext("2d");
    g.setTransform(1, 0, 0, 1, 0, 0);
    g.clearRect(0, 0, pw, ph);
    var k = Math.pow(2, v.z) * T;
    g.setTransform(dpr * k, 0, 0, dpr * k, dpr * (v.w / 2 - v.x * k), dpr * (v.h / 2 - v.y * k));
    g.lineJoin = "round"; g.lineCap = "round";
    layers.forEach(function (l) {
      if (l.above !== above) return;
      if (l.kind === "areas") {
        g.beginPath();
        l.areas.forEach(function (poly) {
          poly.forEach(function (ring) {
            ring.forEach(function (p, i) { if (i) g.lineTo(p[0], p[1]); else g.moveTo(p[0], p[1]); });
            g.closePath();
          });
        });
        g.fillStyle = l.color;
        g.fill("evenodd");
        if (l.width > 0) { g.lineWidth = l.width / k; g.strokeStyle = l.color; g.stroke(); }
      } else if (l.kind === "lines") {
        g.beginPath();
        l.lines.forEach(function (ln) {
          ln.forEach(function (p, i) { if (i) g.lineTo(p[0], p[1]); else g.moveTo(p[0], p[1]); });
        });
        g.lineWidth = l.width / k;
        g.strokeStyle = l.color;
        g.stroke();
      }
    });
  }

  function intersects(a, b) { return a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]; }

  function place(v) {
    var k = Math.pow(2, v.z) * T, placed = [], m = mapEl.getBoundingClientRect();
    // The key card and the controls sit over the map: no label under them.
    [document.getElementById("st-key"), document.querySelector(".st-corner"), document.getElementById("st-tools")].forEach(function (el) {
      if (!el || el.hidden) return;
      var r = el.getBoundingClientRect();
      if (r.width && r.height) placed.push([r.left - m.left, r.top - m.top, r.right - m.left, r.bottom - m.top]);
    });
    labels.forEach(function (l) {
      var cx = (l.x - v.x) * k + v.w / 2, cy = (l.y - v.y) * k + v.h / 2;
      var b = [cx - l.w / 2 - PAD, cy - l.h / 2 - PAD, cx + l.w / 2 + PAD, cy + l.h / 2 + PAD];
      var show = l.w > 0 && b[0] >= 0 && b[2] <= v.w && b[1] >= 0 && b[3] <= v.h;
      for (var i = 0; show && i < placed.length; i++) if (intersects(b, placed[i])) show = false;
      if (show) {
        placed.push(b);
        l.el.style.transform = "translate(" + Math.round(cx - l.w / 2) + "px," + Math.round(cy - l.h / 2) + "px)";
      }
      l.el.style.visibility = show ? "visible" : "hidden";
    });
  }

  function draw() {
    if (!layers || !view) return;
    paint(below, false, view);
    paint(above, true, view);
    place(view);
  }

  window.stippleReferenceView = function (x, y, z, w, h) {
    view = { x: x, y: y, z: z, w: w, h: h };
    draw();
  };
  // The first view was drawn before this script ran: ask the viewer.
  if (window.stippleViewer) {
    var v0 = window.stippleViewer.state();
    view = { x: wx(v0.lon), y: wy(v0.lat), z: v0.z, w: mapEl.clientWidth, h: mapEl.clientHeight };
  }

  var s = document.createElement("script");
  s.src = map.reference;
  s.onload = setup;
  document.body.appendChild(s);
})();
