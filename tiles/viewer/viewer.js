// stipple viewer: shows the dot-tile maps that stipple writes. Plain
// browser JavaScript of our own: no libraries, no requests to other origins,
// no inline code (the page's Content-Security-Policy forbids it). It works
// from file:// and from any static host: tiles are <img> elements and the
// data arrives as scripts, never through fetch.
(function () {
  "use strict";
  var data = window.stippleMap;
  var T = 256; // CSS pixels per tile edge, whatever the tile's own size
  var MAXLAT = 85.0511287798066; // atan(sinh π), the edge of Web Mercator

  function byId(id) { return document.getElementById(id); }
  function clamp(v, a, b) { return Math.max(a, Math.min(b, v)); }
  function lonToX(lon) { return (lon + 180) / 360; }
  function latToY(lat) {
    var s = Math.sin(clamp(lat, -MAXLAT, MAXLAT) * Math.PI / 180);
    return 0.5 - Math.log((1 + s) / (1 - s)) / (4 * Math.PI);
  }
  function xToLon(x) { return x * 360 - 180; }
  // normLon puts a longitude in [−180, 180): the view's centre may sit in
  // the world copy east or west of the first, over a map that crosses 180°.
  function normLon(lon) { return ((lon + 180) % 360 + 360) % 360 - 180; }
  function yToLat(y) { return Math.atan(Math.sinh(Math.PI * (1 - 2 * y))) * 180 / Math.PI; }
  // Metres per CSS pixel at a latitude and (fractional) zoom: Microsoft,
  // "Bing Maps Tile System": cos(lat) · 2π · 6378137 / (256 · 2^z).
  function groundResolution(lat, z) {
    return Math.cos(lat * Math.PI / 180) * 2 * Math.PI * 6378137 / (256 * Math.pow(2, z));
  }

  var mapEl = byId("st-map"), keyEl = byId("st-key"), divider = byId("st-divider");
  var embed = document.body.classList.contains("st-embed");
  var layers = data.layers, sets = data.sets;

  // ---- Which tiles exist: tile-index/{set}-{z}.js, loaded on demand. ----
  var indexes = sets.map(function () { return {}; });
  window.stippleTileIndex = function (set, z, idx) {
    var rows = idx.rows.map(function (r) {
      var out = [], at = idx.x0;
      for (var i = 0; i + 1 < r.length; i += 2) {
        at += r[i];
        out.push(at, at + r[i + 1]);
        at += r[i + 1];
      }
      return out;
    });
    indexes[set][z] = { y0: idx.y0, rows: rows };
    schedule();
  };
  function tileIndex(set, z) {
    var v = indexes[set][z];
    if (v === undefined) {
      indexes[set][z] = "loading";
      var s = document.createElement("script");
      s.src = sets[set].index.replace("{z}", z);
      s.onerror = function () { indexes[set][z] = { y0: 0, rows: [] }; schedule(); };
      document.head.appendChild(s);
      return null;
    }
    return v === "loading" ? null : v;
  }
  function hasTile(idx, x, y) {
    var r = idx.rows[y - idx.y0];
    if (!r) return false;
    for (var i = 0; i < r.length; i += 2) {
      if (x < r[i]) return false;
      if (x < r[i + 1]) return true;
    }
    return false;
  }

  // ---- Tile images. On a screen with more than one device pixel per CSS
  // pixel, a set with high-density tiles (tiles_2x: twice the pixels, the
  // same area) is asked for those; CSS draws every tile 256 px wide, so a
  // dense tile is as big on screen as a 1× one, only sharper. A dense tile
  // that fails to load is asked for again at 1×. ----
  function tileURL(t, z, x, y) { return t.replace("{z}", z).replace("{x}", x).replace("{y}", y); }
  function dense(set) { return !!sets[set].tiles_2x && (window.devicePixelRatio || 1) > 1; }
  function tileArrived() { this.stDone = true; schedule(); }
  function tileFailed() {
    var plain = this.stPlain;
    if (plain) {
      this.stPlain = null;
      this.src = plain;
      return;
    }
    this.stDone = true;
    schedule();
  }

  // ---- A tile layer: one tile set drawn at the zoom nearest the view's,
  // keeping the previous zoom's tiles, scaled, until the new ones are in. ----
  var drawCount = 0;
  function TileLayer(parent) {
    this.el = document.createElement("div");
    this.el.className = "st-sheet";
    parent.appendChild(this.el);
    this.levels = {};
    this.cur = null;
    this.want = 0;
    this.loaded = 0;
  }
  TileLayer.prototype.clear = function () {
    for (var k in this.levels) this.levels[k].el.remove();
    this.levels = {};
    this.cur = null;
    this.want = this.loaded = 0;
  };
  TileLayer.prototype.level = function (set, z) {
    var k = set + "/" + z, L = this.levels[k];
    if (!L) {
      L = { key: k, set: set, z: z, el: document.createElement("div"), tiles: {}, used: 0 };
      L.el.className = "st-level";
      this.levels[k] = L;
    }
    return L;
  };
  // update draws set (−1 for none) for view v in a w × h box; below is true
  // for outlines, which are hidden under their lowest zoom instead of drawn
  // scaled down.
  TileLayer.prototype.update = function (set, v, w, h, below) {
    if (set < 0) { this.clear(); return; }
    var zs = sets[set].zooms;
    var want = Math.round(v.z);
    if (!zs.length || (below && want < zs[0])) { this.clear(); return; }
    var tz = zs[0];
    for (var i = 0; i < zs.length; i++) if (zs[i] <= want) tz = zs[i];
    var idx = tileIndex(set, tz);
    var self = this, stamp = ++drawCount;
    if (idx) {
      var L = this.level(set, tz), n = Math.pow(2, tz), s = Math.pow(2, v.z - tz);
      var cx = v.x * n * T, cy = v.y * n * T;
      var x0 = Math.floor((cx - w / 2 / s) / T), x1 = Math.floor((cx + w / 2 / s) / T);
      var y0 = Math.max(0, Math.floor((cy - h / 2 / s) / T)), y1 = Math.min(n - 1, Math.floor((cy + h / 2 / s) / T));
      var seen = {}, wantN = 0, loadedN = 0;
      for (var ty = y0; ty <= y1; ty++) {
        for (var tx = x0; tx <= x1; tx++) {
          var wx = ((tx % n) + n) % n;
          if (!hasTile(idx, wx, ty)) continue;
          var key = tx + "," + ty, img = L.tiles[key];
          seen[key] = true;
          wantN++;
          if (!img) {
            img = document.createElement("img");
            img.alt = "";
            img.decoding = "async";
            img.draggable = false;
            img.onload = tileArrived;
            img.onerror = tileFailed;
            img.stX = tx;
            img.stY = ty;
            if (dense(set)) {
              img.stPlain = tileURL(sets[set].tiles, tz, wx, ty);
              img.src = tileURL(sets[set].tiles_2x, tz, wx, ty);
            } else {
              img.src = tileURL(sets[set].tiles, tz, wx, ty);
            }
            L.tiles[key] = img;
            L.el.appendChild(img);
          }
          if (img.stDone) loadedN++;
        }
      }
      for (var k in L.tiles) if (!seen[k]) { L.tiles[k].remove(); delete L.tiles[k]; }
      if (this.el.lastChild !== L.el) this.el.appendChild(L.el);
      L.used = stamp;
      this.cur = L;
      this.want = wantN;
      this.loaded = loadedN;
    } else {
      this.want = 1; // the index is on its way
      this.loaded = 0;
    }
    var done = idx && this.want === this.loaded;
    var keep = [];
    for (var lk in this.levels) {
      var M = this.levels[lk];
      if (M === this.cur) continue;
      if (done) { M.el.remove(); delete this.levels[lk]; } else keep.push(M);
    }
    // Keep at most two stand-ins: the most recently shown.
    keep.sort(function (a, b) { return b.used - a.used; });
    keep.slice(2).forEach(function (M) { M.el.remove(); delete self.levels[M.key]; });
    for (var pk in this.levels) place(this.levels[pk], v, w, h);
  };
  // place puts every tile of level L on whole device pixels: each tile
  // edge is rounded to the nearest device pixel on its own, so a tile ends
  // exactly where its neighbour starts. A layer moved or scaled as a whole
  // by a fractional CSS transform would leave each tile edge part-covered,
  // and the ground would show through as a thin light line.
  function place(L, v, w, h) {
    var n = Math.pow(2, L.z), u = T * Math.pow(2, v.z - L.z), r = window.devicePixelRatio || 1;
    var ox = w / 2 - v.x * n * u, oy = h / 2 - v.y * n * u;
    function edge(o, i) { return Math.round((o + i * u) * r) / r; }
    for (var k in L.tiles) {
      var img = L.tiles[k], s = img.style;
      var x0 = edge(ox, img.stX), x1 = edge(ox, img.stX + 1), y0 = edge(oy, img.stY), y1 = edge(oy, img.stY + 1);
      s.left = x0 + "px";
      s.top = y0 + "px";
      s.width = (x1 - x0) + "px";
      s.height = (y1 - y0) + "px";
    }
  }

  function Stack(el) {
    this.el = el;
    this.dots = new TileLayer(el);
    this.outline = new TileLayer(el);
  }
  var stackA = new Stack(mapEl.querySelector('[data-side="a"]'));
  var stackB = new Stack(mapEl.querySelector('[data-side="b"]'));

  // ---- The view: centre in world units (0–1 each way), fractional zoom. ----
  var st = { x: 0.5, y: 0.5, z: 0, layer: 0, right: -1, split: 0.5, outline: false };
  function shown() { return st.right >= 0 ? [layers[st.layer], layers[st.right]] : [layers[st.layer]]; }
  function zoomLimits() {
    var a = Infinity, b = -Infinity;
    shown().forEach(function (l) { a = Math.min(a, l.min_zoom); b = Math.max(b, l.max_zoom); });
    return [a, b];
  }
  // box is the shown maps' extent in world units. Bounds are
  // [west, south, east, north] as in RFC 7946 §5.2: west > east means the
  // extent crosses 180°, and its east edge is then taken in the next world
  // copy (x beyond 1), so the box is one unbroken span.
  function box() {
    var b = null;
    shown().forEach(function (l) {
      var x0 = lonToX(l.bounds[0]), x1 = lonToX(l.bounds[2]);
      if (x1 < x0) x1 += 1;
      var y0 = latToY(l.bounds[3]), y1 = latToY(l.bounds[1]);
      if (!b) { b = { x0: x0, y0: y0, x1: x1, y1: y1 }; return; }
      var d = Math.round((b.x0 + b.x1) / 2 - (x0 + x1) / 2);
      b.x0 = Math.min(b.x0, x0 + d); b.x1 = Math.max(b.x1, x1 + d);
      b.y0 = Math.min(b.y0, y0); b.y1 = Math.max(b.y1, y1);
    });
    if (b.x1 - b.x0 > 1) { var c = (b.x0 + b.x1) / 2; b.x0 = c - 0.5; b.x1 = c + 0.5; }
    return b;
  }
  // near moves world x by whole worlds to the copy nearest the box.
  function near(x, b) { return x - Math.round(x - (b.x0 + b.x1) / 2); }
  function size() { return { w: mapEl.clientWidth, h: mapEl.clientHeight }; }
  // constrain keeps the zoom in its limits and some of the map in view.
  function constrain() {
    var lim = zoomLimits(), b = box(), sz = size();
    st.z = clamp(st.z, lim[0], lim[1]);
    var k = Math.pow(2, st.z) * T, mx = Math.max(0, sz.w / 2 - 48) / k, my = Math.max(0, sz.h / 2 - 48) / k;
    st.x = clamp(near(st.x, b), b.x0 - mx, b.x1 + mx);
    st.y = clamp(st.y, Math.max(0, b.y0 - my), Math.min(1, b.y1 + my));
  }
  function zoomAt(z, px, py) {
    var lim = zoomLimits(), sz = size();
    z = clamp(z, lim[0], lim[1]);
    var k0 = Math.pow(2, st.z) * T, k1 = Math.pow(2, z) * T;
    var ax = st.x + (px - sz.w / 2) / k0, ay = st.y + (py - sz.h / 2) / k0;
    st.x = ax - (px - sz.w / 2) / k1;
    st.y = ay - (py - sz.h / 2) / k1;
    st.z = z;
    schedule();
  }
  function zoomStep(dir) {
    var sz = size(), z = dir > 0 ? Math.floor(st.z + 1e-6) + 1 : Math.ceil(st.z - 1e-6) - 1;
    zoomAt(z, sz.w / 2, sz.h / 2);
  }
  function pan(dx, dy) {
    var k = Math.pow(2, st.z) * T;
    st.x -= dx / k;
    st.y -= dy / k;
    schedule();
  }
  // fit shows the whole map as large as the screen allows in a rectangle
  // clear of the key card (where it lies over the map) and the controls:
  // each candidate rectangle runs from the map's edges or an obstacle's
  // edges, and the one that gives the deepest zoom wins.
  function fit() {
    var b = box(), sz = size(), lim = zoomLimits(), m = mapEl.getBoundingClientRect(), pad = embed ? 8 : 12;
    var obs = [];
    function add(el) {
      if (!el || el.hidden) return;
      var r = el.getBoundingClientRect();
      if (r.width && r.height) obs.push({ l: r.left - m.left, t: r.top - m.top, r: r.right - m.left, b: r.bottom - m.top });
    }
    if (getComputedStyle(keyEl).position === "absolute") add(keyEl);
    add(byId("st-tools"));
    add(mapEl.parentNode.querySelector(".st-corner"));
    var ls = [0], rs = [sz.w], ts = [0], bs = [sz.h];
    obs.forEach(function (o) { ls.push(o.r); rs.push(o.l); ts.push(o.b); bs.push(o.t); });
    var best = null;
    ls.forEach(function (l) { rs.forEach(function (r) { ts.forEach(function (t) { bs.forEach(function (bt) {
      if (r - l < 2 * pad + 40 || bt - t < 2 * pad + 40) return;
      for (var i = 0; i < obs.length; i++) {
        var o = obs[i];
        if (o.l < r && o.r > l && o.t < bt && o.b > t) return;
      }
      var w = r - l - 2 * pad, h = bt - t - 2 * pad;
      var z = Math.log(Math.min(w / ((b.x1 - b.x0) * T), h / ((b.y1 - b.y0) * T))) / Math.LN2;
      if (!best || z > best.z) best = { z: z, l: l + pad, t: t + pad, w: w, h: h };
    }); }); }); });
    if (!best) best = { z: Math.log(Math.min(sz.w / ((b.x1 - b.x0) * T), sz.h / ((b.y1 - b.y0) * T))) / Math.LN2, l: 0, t: 0, w: sz.w, h: sz.h };
    var z = isFinite(best.z) ? best.z : lim[1];
    z = clamp(Math.floor(z * 100) / 100, lim[0], lim[1]);
    var k = Math.pow(2, z) * T;
    st.z = z;
    st.x = (b.x0 + b.x1) / 2 - (best.l + best.w / 2 - sz.w / 2) / k;
    st.y = (b.y0 + b.y1) / 2 - (best.t + best.h / 2 - sz.h / 2) / k;
    schedule();
  }

  // ---- Scale bar: metric and imperial, at the view's centre latitude. ----
  function nice(v) {
    var p = Math.pow(10, Math.floor(Math.log(v) / Math.LN10)), m = v / p;
    return (m >= 5 ? 5 : m >= 2 ? 2 : 1) * p;
  }
  function trim(v) { return String(Math.round(v * 1000) / 1000); }
  function scaleBars(lat, z, maxPx) {
    var res = groundResolution(lat, z), maxM = res * maxPx;
    var m = nice(maxM);
    var metric = { px: m / res, label: m >= 1000 ? trim(m / 1000) + " km" : trim(m) + " m" };
    var maxFt = maxM / 0.3048, imperial;
    if (maxFt >= 5280) {
      var mi = nice(maxFt / 5280);
      imperial = { px: mi * 5280 * 0.3048 / res, label: trim(mi) + " mi" };
    } else {
      var ft = nice(maxFt);
      imperial = { px: ft * 0.3048 / res, label: trim(ft) + " ft" };
    }
    return { resolution: res, metric: metric, imperial: imperial };
  }
  var scaleEl = byId("st-scale");
  function drawScale() {
    var sb = scaleBars(yToLat(st.y), st.z, size().w < 480 ? 76 : 120);
    [["st-metric", sb.metric], ["st-imperial", sb.imperial]].forEach(function (p) {
      var row = scaleEl.querySelector("." + p[0]);
      row.querySelector(".st-line").style.width = p[1].px.toFixed(1) + "px";
      row.querySelector(".st-scale-label").textContent = p[1].label;
    });
    return sb;
  }

  // ---- Drawing, at most once a frame. ----
  var frame = 0;
  function schedule() { if (!frame) frame = requestAnimationFrame(render); }
  function render() {
    frame = 0;
    var sz = size();
    if (!sz.w || !sz.h) return;
    constrain();
    var la = layers[st.layer];
    stackA.dots.update(la.dots, st, sz.w, sz.h, false);
    stackA.outline.update(st.outline ? la.outline : -1, st, sz.w, sz.h, true);
    if (st.right >= 0) {
      var lb = layers[st.right], cut = Math.round(st.split * sz.w);
      stackB.el.hidden = false;
      stackB.el.style.clipPath = "inset(0 0 0 " + cut + "px)";
      stackB.dots.update(lb.dots, st, sz.w, sz.h, false);
      stackB.outline.update(st.outline ? lb.outline : -1, st, sz.w, sz.h, true);
      divider.hidden = false;
      divider.style.left = cut + "px";
      divider.setAttribute("aria-valuenow", String(Math.round(st.split * 100)));
    } else {
      stackB.el.hidden = true;
      stackB.dots.clear();
      stackB.outline.clear();
      divider.hidden = true;
    }
    drawScale();
    if (window.stippleReferenceView) window.stippleReferenceView(st.x, st.y, st.z, sz.w, sz.h);
    var lim = zoomLimits();
    byId("st-in").disabled = st.z >= lim[1] - 1e-9;
    byId("st-out").disabled = st.z <= lim[0] + 1e-9;
    hashSoon();
  }

  // ---- The view in the URL hash: #z=12.50&lat=-34.22500&lon=-128.41030
  // [&layer=KEY][&right=KEY&split=0.500][&areas=1], so a view can be shared. ----
  function layerByKey(k) {
    for (var i = 0; i < layers.length; i++) if (layers[i].key === k) return i;
    return -1;
  }
  function hashString() {
    var p = "z=" + st.z.toFixed(2) + "&lat=" + yToLat(st.y).toFixed(5) + "&lon=" + normLon(xToLon(st.x)).toFixed(5);
    if (layers.length > 1) p += "&layer=" + encodeURIComponent(layers[st.layer].key);
    if (st.right >= 0) p += "&right=" + encodeURIComponent(layers[st.right].key) + "&split=" + st.split.toFixed(3);
    if (st.outline) p += "&areas=1";
    return "#" + p;
  }
  function readHash() {
    var h = location.hash.replace(/^#/, ""), q = {};
    if (!h) return false;
    try {
      h.split("&").forEach(function (kv) {
        var i = kv.indexOf("=");
        if (i > 0) q[decodeURIComponent(kv.slice(0, i))] = decodeURIComponent(kv.slice(i + 1));
      });
    } catch (e) { return false; }
    var z = parseFloat(q.z), lat = parseFloat(q.lat), lon = parseFloat(q.lon);
    var l = q.layer !== undefined ? layerByKey(q.layer) : 0;
    setLayer(l >= 0 ? l : 0);
    var r = q.right !== undefined ? layerByKey(q.right) : -1;
    setRight(r >= 0 && r !== st.layer ? r : -1);
    var sp = parseFloat(q.split);
    if (isFinite(sp)) st.split = clamp(sp, 0.05, 0.95);
    setOutline(q.areas === "1");
    // A hash may name only the layers: then the start view is the map's.
    if (!isFinite(z) || !isFinite(lat) || !isFinite(lon)) return false;
    st.z = z;
    st.x = near(lonToX(normLon(lon)), box());
    st.y = latToY(lat);
    constrain();
    schedule();
    return true;
  }
  var hashTimer = 0, lastHash = "";
  function hashSoon() {
    if (hashTimer) return;
    hashTimer = setTimeout(function () {
      hashTimer = 0;
      var h = hashString();
      if (h === location.hash) return;
      lastHash = h;
      try { history.replaceState(null, "", h); } catch (e) {
        try { location.replace(h); } catch (e2) { /* a sandboxed frame may refuse both */ }
      }
    }, 200);
  }
  window.addEventListener("hashchange", function () {
    if (location.hash !== lastHash) readHash();
  });

  // ---- Layers, compare mode, outlines, the key. ----
  var legends = Array.prototype.slice.call(document.querySelectorAll(".st-legend"));
  function showLegends() {
    legends.forEach(function (el) {
      var n = +el.dataset.layer, side = el.querySelector(".st-side");
      var isLeft = n === st.layer, isRight = n === st.right;
      el.hidden = !(isLeft || isRight);
      el.style.order = isRight ? "1" : "0";
      side.hidden = st.right < 0;
      side.textContent = isRight ? side.dataset.right : side.dataset.left;
    });
  }
  function setLayer(n) {
    st.layer = n;
    if (st.right === n) st.right = pickOther(n);
    document.querySelectorAll('input[name="st-layer"]').forEach(function (r) { r.checked = +r.value === n; });
    syncCompare();
  }
  function pickOther(n) {
    var sel = byId("st-right"), v = sel ? +sel.value : -1;
    if (v >= 0 && v !== n) return v;
    return (n + 1) % layers.length;
  }
  function setRight(r) {
    st.right = layers.length > 1 ? r : -1;
    syncCompare();
  }
  function syncCompare() {
    var btn = byId("st-compare"), sel = byId("st-right"), wrap = byId("st-right-wrap");
    if (btn) btn.setAttribute("aria-pressed", st.right >= 0 ? "true" : "false");
    if (sel && st.right >= 0) sel.value = String(st.right);
    if (wrap) wrap.hidden = !(st.right >= 0 && layers.length > 2);
    showLegends();
    schedule();
  }
  function setOutline(on) {
    var btn = byId("st-outline");
    st.outline = !!on && !!btn;
    if (btn) btn.setAttribute("aria-pressed", st.outline ? "true" : "false");
    schedule();
  }
  function fold(folded) {
    keyEl.classList.toggle("st-folded", folded);
    var b = byId("st-fold");
    b.setAttribute("aria-expanded", folded ? "false" : "true");
    b.textContent = folded ? b.dataset.show : b.dataset.hide;
    schedule();
  }

  document.querySelectorAll(".st-swatch").forEach(function (s) { s.style.backgroundColor = s.dataset.color; });
  document.querySelectorAll('input[name="st-layer"]').forEach(function (r) {
    r.addEventListener("change", function () { if (r.checked) setLayer(+r.value); });
  });
  if (byId("st-compare")) byId("st-compare").addEventListener("click", function () {
    setRight(st.right >= 0 ? -1 : pickOther(st.layer));
  });
  if (byId("st-right")) byId("st-right").addEventListener("change", function () {
    var v = +byId("st-right").value;
    if (v === st.layer) { st.layer = st.right; setLayer(st.layer); }
    setRight(v);
  });
  if (byId("st-outline")) byId("st-outline").addEventListener("click", function () { setOutline(!st.outline); });
  byId("st-fold").addEventListener("click", function () { fold(!keyEl.classList.contains("st-folded")); });
  byId("st-in").addEventListener("click", function () { zoomStep(1); });
  byId("st-out").addEventListener("click", function () { zoomStep(-1); });
  byId("st-fit").addEventListener("click", function () { fit(); });

  // ---- Pointer: drag to pan with a mouse, a pen or one finger; pinch. ----
  var pointers = {}, pinch = null;
  function pointerList() { return Object.keys(pointers).map(function (k) { return pointers[k]; }); }
  function local(e) { var r = mapEl.getBoundingClientRect(); return { x: e.clientX - r.left, y: e.clientY - r.top }; }
  function startPinch() {
    var p = pointerList();
    if (p.length !== 2) { pinch = null; return; }
    var mid = { x: (p[0].x + p[1].x) / 2, y: (p[0].y + p[1].y) / 2 }, sz = size(), k = Math.pow(2, st.z) * T;
    pinch = {
      d: Math.max(1, Math.hypot(p[0].x - p[1].x, p[0].y - p[1].y)), z: st.z,
      wx: st.x + (mid.x - sz.w / 2) / k, wy: st.y + (mid.y - sz.h / 2) / k
    };
  }
  mapEl.addEventListener("pointerdown", function (e) {
    if (e.pointerType === "mouse" && e.button !== 0) return;
    mapEl.focus({ preventScroll: true });
    try { mapEl.setPointerCapture(e.pointerId); } catch (err) { /* already released */ }
    pointers[e.pointerId] = local(e);
    mapEl.classList.add("st-dragging");
    startPinch();
  });
  mapEl.addEventListener("pointermove", function (e) {
    var old = pointers[e.pointerId];
    if (!old) return;
    var now = local(e);
    pointers[e.pointerId] = now;
    if (pinch) {
      var p = pointerList(), sz = size(), lim = zoomLimits();
      var d = Math.max(1, Math.hypot(p[0].x - p[1].x, p[0].y - p[1].y));
      var mid = { x: (p[0].x + p[1].x) / 2, y: (p[0].y + p[1].y) / 2 };
      st.z = clamp(pinch.z + Math.log(d / pinch.d) / Math.LN2, lim[0], lim[1]);
      var k = Math.pow(2, st.z) * T;
      st.x = pinch.wx - (mid.x - sz.w / 2) / k;
      st.y = pinch.wy - (mid.y - sz.h / 2) / k;
      schedule();
    } else {
      pan(now.x - old.x, now.y - old.y);
    }
  });
  function lift(e) {
    if (!pointers[e.pointerId]) return;
    delete pointers[e.pointerId];
    startPinch();
    if (!pointerList().length) mapEl.classList.remove("st-dragging");
  }
  mapEl.addEventListener("pointerup", lift);
  mapEl.addEventListener("pointercancel", lift);
  mapEl.addEventListener("dblclick", function (e) {
    var p = local(e);
    zoomAt(e.shiftKey ? Math.ceil(st.z - 1e-6) - 1 : Math.floor(st.z + 1e-6) + 1, p.x, p.y);
  });
  mapEl.addEventListener("wheel", function (e) {
    e.preventDefault();
    var dy = e.deltaY * (e.deltaMode === 1 ? 33 : e.deltaMode === 2 ? 400 : 1);
    // A trackpad pinch arrives as a wheel with ctrlKey and small deltas.
    var dz = clamp(-dy / (e.ctrlKey ? 100 : 300), -1, 1);
    var p = local(e);
    zoomAt(st.z + dz, p.x, p.y);
  }, { passive: false });
  mapEl.addEventListener("keydown", function (e) {
    var k = e.key, step = 96;
    if (e.altKey || e.ctrlKey || e.metaKey) return;
    if (k === "ArrowLeft") pan(step, 0);
    else if (k === "ArrowRight") pan(-step, 0);
    else if (k === "ArrowUp") pan(0, step);
    else if (k === "ArrowDown") pan(0, -step);
    else if (k === "+" || k === "=") zoomStep(1);
    else if (k === "-" || k === "_") zoomStep(-1);
    else if (k === "0") fit();
    else return;
    e.preventDefault();
  });

  // ---- The compare divider: drag it, or use the arrow keys on it. ----
  function setSplit(v) { st.split = clamp(v, 0.05, 0.95); schedule(); }
  divider.addEventListener("pointerdown", function (e) {
    e.preventDefault();
    try { divider.setPointerCapture(e.pointerId); } catch (err) { /* ignore */ }
    divider.stDrag = true;
    divider.focus({ preventScroll: true });
  });
  divider.addEventListener("pointermove", function (e) {
    if (!divider.stDrag) return;
    setSplit(local(e).x / size().w);
  });
  divider.addEventListener("pointerup", function () { divider.stDrag = false; });
  divider.addEventListener("pointercancel", function () { divider.stDrag = false; });
  divider.addEventListener("keydown", function (e) {
    var k = e.key;
    if (k === "ArrowLeft" || k === "ArrowDown") setSplit(st.split - 0.05);
    else if (k === "ArrowRight" || k === "ArrowUp") setSplit(st.split + 0.05);
    else if (k === "Home") setSplit(0.05);
    else if (k === "End") setSplit(0.95);
    else return;
    e.preventDefault();
  });

  if (window.ResizeObserver) new ResizeObserver(schedule).observe(mapEl);
  window.addEventListener("resize", schedule);

  // ---- Start: the hash's view, or the metadata's, shrunk to fit. ----
  // On narrow screens and in embeds the key opens folded: one compact
  // block of swatches, labels, the dot value and the short caution.
  if (embed || (window.matchMedia && matchMedia("(max-width: 719px)").matches)) fold(true);
  showLegends();
  if (!readHash()) fit();
  render();

  // A small window for scripts and tests: the view and the loading state.
  window.stippleViewer = {
    state: function () {
      var stacks = st.right >= 0 ? [stackA, stackB] : [stackA], want = 0, loaded = 0;
      stacks.forEach(function (s) {
        [s.dots, s.outline].forEach(function (t) { want += t.want; loaded += t.loaded; });
      });
      return {
        lon: normLon(xToLon(st.x)), lat: yToLat(st.y), z: st.z,
        tileZoom: stackA.dots.cur ? stackA.dots.cur.z : -1,
        tiles: want, loaded: loaded, ready: want === loaded && !frame,
        layer: layers[st.layer].key, right: st.right >= 0 ? layers[st.right].key : "",
        split: st.split, outline: st.outline, hash: hashString()
      };
    },
    groundResolution: groundResolution,
    scaleBars: scaleBars,
    scale: drawScale
  };
})();
