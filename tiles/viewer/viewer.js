// stipple viewer: shows an XYZ dot pyramid written by stipple. No libraries.
(function () {
  "use strict";
  var meta = window.stippleMap;
  var el = document.getElementById("st-map");
  var T = meta.tile_size, CSS_T = 256;
  document.querySelectorAll(".st-swatch").forEach(function (s) { s.style.background = s.dataset.color; });
  document.querySelectorAll(".st-map img").forEach(function (i) { i.remove(); });

  function lonToX(lon) { return (lon + 180) / 360; }
  function latToY(lat) {
    var s = Math.sin(Math.max(-85.0511, Math.min(85.0511, lat)) * Math.PI / 180);
    return 0.5 - Math.log((1 + s) / (1 - s)) / (4 * Math.PI);
  }
  // View: centre in world units [0,1) and an integer zoom.
  var view = { x: lonToX(meta.center[0]), y: latToY(meta.center[1]), z: Math.round(meta.center[2]) };
  var tiles = {};

  function clampZoom(z) { return Math.max(meta.min_zoom, Math.min(meta.max_zoom, z)); }

  function draw() {
    var w = el.clientWidth, h = el.clientHeight, n = Math.pow(2, view.z);
    var cx = view.x * n * CSS_T, cy = view.y * n * CSS_T;
    var x0 = Math.floor((cx - w / 2) / CSS_T), x1 = Math.floor((cx + w / 2) / CSS_T);
    var y0 = Math.max(0, Math.floor((cy - h / 2) / CSS_T)), y1 = Math.min(n - 1, Math.floor((cy + h / 2) / CSS_T));
    var want = {};
    for (var ty = y0; ty <= y1; ty++) {
      for (var tx = x0; tx <= x1; tx++) {
        var wx = ((tx % n) + n) % n, key = view.z + "/" + wx + "/" + ty + "@" + tx;
        want[key] = true;
        var img = tiles[key];
        if (!img) {
          img = document.createElement("img");
          img.alt = "";
          img.onerror = function () { this.style.visibility = "hidden"; };
          img.src = meta.tiles.replace("{z}", view.z).replace("{x}", wx).replace("{y}", ty);
          tiles[key] = img;
          el.appendChild(img);
        }
        img.style.left = Math.round(tx * CSS_T - cx + w / 2) + "px";
        img.style.top = Math.round(ty * CSS_T - cy + h / 2) + "px";
      }
    }
    Object.keys(tiles).forEach(function (k) { if (!want[k]) { tiles[k].remove(); delete tiles[k]; } });
  }

  function zoomAt(dz, px, py) {
    var z = clampZoom(view.z + dz);
    if (z === view.z) return;
    var w = el.clientWidth, h = el.clientHeight, n = Math.pow(2, view.z) * CSS_T;
    var ax = view.x + (px - w / 2) / n, ay = view.y + (py - h / 2) / n;
    var f = Math.pow(2, view.z - z);
    view.x = ax - (ax - view.x) * f; view.y = ay - (ay - view.y) * f; view.z = z;
    draw();
  }
  function pan(dx, dy) {
    var n = Math.pow(2, view.z) * CSS_T;
    view.x -= dx / n; view.y = Math.max(0, Math.min(1, view.y - dy / n));
    draw();
  }

  var drag = null;
  el.addEventListener("pointerdown", function (e) { drag = { x: e.clientX, y: e.clientY }; el.setPointerCapture(e.pointerId); el.focus(); });
  el.addEventListener("pointermove", function (e) {
    if (!drag) return;
    pan(e.clientX - drag.x, e.clientY - drag.y); drag = { x: e.clientX, y: e.clientY };
  });
  el.addEventListener("pointerup", function () { drag = null; });
  el.addEventListener("wheel", function (e) {
    e.preventDefault();
    var r = el.getBoundingClientRect();
    zoomAt(e.deltaY < 0 ? 1 : -1, e.clientX - r.left, e.clientY - r.top);
  }, { passive: false });
  el.addEventListener("keydown", function (e) {
    var step = 80, k = e.key;
    if (k === "ArrowLeft") pan(step, 0); else if (k === "ArrowRight") pan(-step, 0);
    else if (k === "ArrowUp") pan(0, step); else if (k === "ArrowDown") pan(0, -step);
    else if (k === "+" || k === "=") zoomAt(1, el.clientWidth / 2, el.clientHeight / 2);
    else if (k === "-") zoomAt(-1, el.clientWidth / 2, el.clientHeight / 2);
    else return;
    e.preventDefault();
  });
  document.getElementById("st-in").addEventListener("click", function () { zoomAt(1, el.clientWidth / 2, el.clientHeight / 2); });
  document.getElementById("st-out").addEventListener("click", function () { zoomAt(-1, el.clientWidth / 2, el.clientHeight / 2); });
  window.addEventListener("resize", draw);
  draw();
})();
