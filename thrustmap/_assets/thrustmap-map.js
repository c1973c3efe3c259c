/* thrustmap web map: structural symbols drawn on Leaflet's canvas renderer.
 *
 * Azimuths arrive in degrees clockwise from TRUE north. Web Mercator is
 * conformal and its meridians are vertical, so on screen an azimuth a points
 * along (sin a, -cos a) in pixels (y grows downwards) at every latitude.
 * All text reaches the page through textContent, never through HTML.
 */
(function () {
  "use strict";
  var TM = (window.thrustmap = window.thrustmap || {});
  TM.counts = {};
  TM.drawn = {};
  TM.layers = {};
  TM.order = [];
  TM.ready = false;

  var RAD = Math.PI / 180;
  var LABEL_LIMIT = 1500; // labels only when this few symbols are in view
  var LABEL_CELL = 22; // pixels: at most one dip label per cell
  var POPUP_LIMIT = 8; // measurements listed in one popup
  var FONT = "600 10px system-ui, -apple-system, 'Segoe UI', sans-serif";

  function dir(az) {
    return [Math.sin(az * RAD), -Math.cos(az * RAD)];
  }

  function el(tag, cls, text) {
    var node = document.createElement(tag);
    if (cls) node.className = cls;
    if (text !== undefined && text !== null) node.textContent = String(text);
    return node;
  }

  function table(rows) {
    var t = el("table", "tm-table");
    for (var i = 0; i < rows.length; i++) {
      var tr = el("tr");
      tr.appendChild(el("th", null, rows[i][0]));
      tr.appendChild(el("td", null, rows[i][1]));
      t.appendChild(tr);
    }
    return t;
  }

  function pad3(v) {
    var s = String(Math.round(v) % 360);
    return "000".slice(s.length) + s;
  }

  function column(col, i) {
    // columns are plain arrays or dictionary-encoded {d: values, i: codes}
    return Array.isArray(col) ? col[i] : col.d[col.i[i]];
  }

  function labelText(ctx, text, x, y) {
    ctx.strokeText(text, x, y);
    ctx.fillText(text, x, y);
  }

  // one canvas for every thrustmap path: clicks reach the topmost symbol of any layer
  var CANVAS = L.canvas({ padding: 0.1, tolerance: 5 });

  // ---- symbol geometry, shared by the map layer and the legend ----------
  // codes: 0 inclined plane, 1 horizontal plane, 2 vertical plane,
  // 3 overturned plane, 4 plunging line, 5 horizontal line, 6 vertical line.
  function strokeSymbol(ctx, code, tick, x, y, az, s) {
    var d = dir(az), u = dir(az - 90), t = 0.6 * s;
    if (code <= 3) {
      if (code === 1) {
        ctx.moveTo(x + 0.5 * s, y);
        ctx.arc(x, y, 0.5 * s, 0, 2 * Math.PI);
        ctx.moveTo(x - 0.85 * s, y); ctx.lineTo(x + 0.85 * s, y);
        ctx.moveTo(x, y - 0.85 * s); ctx.lineTo(x, y + 0.85 * s);
        return;
      }
      ctx.moveTo(x - s * u[0], y - s * u[1]);
      ctx.lineTo(x + s * u[0], y + s * u[1]);
      if (code === 2) {
        ctx.moveTo(x - t * d[0], y - t * d[1]);
        ctx.lineTo(x + t * d[0], y + t * d[1]);
      } else if (tick === 0 || code === 3) {
        ctx.moveTo(x, y);
        ctx.lineTo(x + t * d[0], y + t * d[1]);
      }
      if (code === 3) {
        // overturned: the tick ends in a hook curling back toward the strike line
        var r = 0.3 * s, cx = x + t * d[0] + r * u[0], cy = y + t * d[1] + r * u[1];
        var a0 = Math.atan2(-u[1], -u[0]);
        ctx.moveTo(x + t * d[0], y + t * d[1]);
        ctx.arc(cx, cy, r, a0, a0 + Math.PI, false);
      }
      return;
    }
    if (code === 6) {
      ctx.moveTo(x + 0.55 * s, y);
      ctx.arc(x, y, 0.55 * s, 0, 2 * Math.PI);
      return;
    }
    var h = 0.85 * s;
    ctx.moveTo(x - h * d[0], y - h * d[1]);
    ctx.lineTo(x + h * d[0], y + h * d[1]);
  }

  function fillSymbol(ctx, code, tick, x, y, az, s) {
    var d = dir(az), u = dir(az - 90), t = 0.6 * s, w = 0.28 * s;
    if (code === 0 && tick === 1) {
      ctx.moveTo(x - w * u[0], y - w * u[1]);
      ctx.lineTo(x + t * d[0], y + t * d[1]);
      ctx.lineTo(x + w * u[0], y + w * u[1]);
      ctx.closePath();
    } else if (code === 4 || code === 5) {
      var h = 0.85 * s, a = 0.45 * s, b = 0.22 * s;
      var ends = code === 5 ? [1, -1] : [1];
      for (var k = 0; k < ends.length; k++) {
        var e = ends[k], px = x + e * h * d[0], py = y + e * h * d[1];
        ctx.moveTo(px + e * 0.15 * s * d[0], py + e * 0.15 * s * d[1]);
        ctx.lineTo(px - e * a * d[0] + b * u[0], py - e * a * d[1] + b * u[1]);
        ctx.lineTo(px - e * a * d[0] - b * u[0], py - e * a * d[1] - b * u[1]);
        ctx.closePath();
      }
    } else if (code === 6) {
      ctx.moveTo(x + 0.16 * s, y);
      ctx.arc(x, y, 0.16 * s, 0, 2 * Math.PI);
    }
  }

  function labelAnchor(code, x, y, az, s) {
    var d = dir(az);
    var off = code >= 4 ? 1.35 * s : 0.6 * s + 7;
    return [x + off * d[0], y + off * d[1]];
  }

  // ---- one canvas path drawing a whole set of orientation symbols -------
  var OrientationSet = L.Path.extend({
    options: { size: 9, weight: 1.6, interactive: true, renderer: CANVAS },

    initialize: function (data, options) {
      L.setOptions(this, options);
      this._data = data;
      var n = (this._n = data.n);
      this._lat = Float64Array.from(data.lat);
      this._lon = Float64Array.from(data.lon);
      this._az = Float64Array.from(data.az);
      this._code = Uint8Array.from(data.code);
      this._style = Uint8Array.from(data.style);
      this._x = new Float64Array(n);
      this._y = new Float64Array(n);
      this._visible = new Int32Array(n);
      this._nVisible = 0;
      // indices grouped by style so that each style is stroked in one path
      this._byStyle = [];
      for (var s = 0; s < data.styles.length; s++) this._byStyle.push([]);
      for (var i = 0; i < n; i++) this._byStyle[this._style[i]].push(i);
      this._hits = [];
      this.on("click", this._openPopup, this);
    },

    getBounds: function () {
      var b = L.latLngBounds([]);
      for (var i = 0; i < this._n; i++) b.extend([this._lat[i], this._lon[i]]);
      return b;
    },

    _project: function () {
      var map = this._map, minx = Infinity, miny = Infinity, maxx = -Infinity, maxy = -Infinity;
      for (var i = 0; i < this._n; i++) {
        var p = map.latLngToLayerPoint([this._lat[i], this._lon[i]]);
        this._x[i] = p.x; this._y[i] = p.y;
        if (p.x < minx) minx = p.x;
        if (p.x > maxx) maxx = p.x;
        if (p.y < miny) miny = p.y;
        if (p.y > maxy) maxy = p.y;
      }
      var pad = 2 * this.options.size + 24;
      this._pxBounds = this._n
        ? L.bounds([minx - pad, miny - pad], [maxx + pad, maxy + pad])
        : L.bounds([0, 0], [0, 0]);
    },

    _update: function () {
      if (this._map) this._updatePath();
    },

    _empty: function () {
      return !this._n;
    },

    _updatePath: function () {
      var r = this._renderer;
      if (!r._drawing || !this._n) return;
      var ctx = r._ctx, b = r._bounds, s = this.options.size, m = 2 * s + 24;
      var x0 = b.min.x - m, y0 = b.min.y - m, x1 = b.max.x + m, y1 = b.max.y + m;
      var nv = 0, styles = this._data.styles, i, k, idx, g;
      ctx.save();
      ctx.lineCap = "round";
      ctx.lineJoin = "round";
      ctx.setLineDash([]);
      ctx.globalAlpha = this.options.opacity;
      ctx.lineWidth = this.options.weight;
      for (g = 0; g < this._byStyle.length; g++) {
        idx = this._byStyle[g];
        var tick = styles[g].tick;
        ctx.strokeStyle = ctx.fillStyle = styles[g].color;
        ctx.beginPath();
        for (k = 0; k < idx.length; k++) {
          i = idx[k];
          var x = this._x[i], y = this._y[i];
          if (x < x0 || x > x1 || y < y0 || y > y1) continue;
          this._visible[nv++] = i;
          strokeSymbol(ctx, this._code[i], tick, x, y, this._az[i], s);
        }
        ctx.stroke();
        ctx.beginPath();
        for (k = 0; k < idx.length; k++) {
          i = idx[k];
          if (this._x[i] < x0 || this._x[i] > x1 || this._y[i] < y0 || this._y[i] > y1) continue;
          fillSymbol(ctx, this._code[i], tick, this._x[i], this._y[i], this._az[i], s);
        }
        ctx.fill();
      }
      this._nVisible = nv;
      if (nv <= LABEL_LIMIT) {
        ctx.font = FONT;
        ctx.textAlign = "center";
        ctx.textBaseline = "middle";
        ctx.lineWidth = 3;
        ctx.strokeStyle = "rgba(255,255,255,0.9)";
        var val = this._data.val, taken = new Set(), cell = LABEL_CELL;
        for (k = 0; k < nv; k++) {
          i = this._visible[k];
          var code = this._code[i];
          if (code === 1 || code === 2 || code === 6 || val[i] === null) continue;
          var a = labelAnchor(code, this._x[i], this._y[i], this._az[i], s);
          // one label per cell of the screen: crowded labels are left out, not overprinted
          var key = Math.floor(a[0] / cell) + ":" + Math.floor(a[1] / (cell * 0.6));
          if (taken.has(key)) continue;
          taken.add(key);
          ctx.fillStyle = styles[this._style[i]].color;
          labelText(ctx, String(val[i]), a[0], a[1]);
        }
      }
      ctx.restore();
      TM.drawn[this.options.key] = nv;
    },

    _containsPoint: function (p) {
      // every symbol under the pointer: a station often holds several measurements
      var tol = this.options.size + this._clickTolerance(), lim = tol * tol, hits = [];
      for (var k = 0; k < this._nVisible; k++) {
        var i = this._visible[k], dx = this._x[i] - p.x, dy = this._y[i] - p.y;
        var dd = dx * dx + dy * dy;
        if (dd <= lim) hits.push([dd, i]);
      }
      hits.sort(function (a, b) { return a[0] - b[0] || a[1] - b[1]; });
      this._hits = hits.slice(0, POPUP_LIMIT).map(function (h) { return h[1]; });
      this._more = Math.max(0, hits.length - POPUP_LIMIT);
      return hits.length > 0;
    },

    _openPopup: function () {
      var hits = this._hits || [];
      if (!hits.length) return;
      var box = el("div", "tm-pop-list");
      for (var h = 0; h < hits.length; h++) box.appendChild(this.popupContent(hits[h]));
      if (this._more) box.appendChild(el("div", "tm-more", "+ " + this._more + " more here: zoom in"));
      L.popup({ maxWidth: 320, maxHeight: 360, className: "tm-popup" })
        .setLatLng([this._lat[hits[0]], this._lon[hits[0]]])
        .setContent(box)
        .openOn(this._map);
    },

    popupContent: function (i) {
      var data = this._data, code = this._code[i], az = this._az[i], rows = [];
      var box = el("div", "tm-pop");
      box.appendChild(el("div", "tm-pop-title", data.styles[this._style[i]].name));
      if (code <= 3) {
        rows.push(["strike / dip (RHR)", pad3(az - 90 + 360) + " / " + data.val[i]]);
        rows.push(["dip direction / dip", pad3(az) + " / " + data.val[i]]);
        if (code === 3) rows.push(["attitude", "overturned"]);
      } else {
        rows.push(["trend / plunge", pad3(az) + " / " + data.val[i]]);
      }
      var cols = data.popup.columns;
      for (var c = 0; c < cols.length; c++) {
        var v = column(data.popup.values[c], i);
        if (v !== null && v !== "") rows.push([cols[c], v]);
      }
      box.appendChild(table(rows));
      return box;
    },

    containerPoint: function (i) {
      return this._map.latLngToContainerPoint([this._lat[i], this._lon[i]]);
    }
  });

  // ---- thrust traces: teeth on the hanging wall, in screen pixels -------
  var ThrustTrace = L.Polyline.extend({
    options: { weight: 2.2, teeth: 30, toothSize: 7, interactive: true, renderer: CANVAS },

    _updateBounds: function () {
      L.Polyline.prototype._updateBounds.call(this);
      if (this._pxBounds) {
        var e = this.options.toothSize + 12;
        this._pxBounds = L.bounds(
          this._pxBounds.min.subtract([e, e]),
          this._pxBounds.max.add([e, e])
        );
      }
    },

    _updatePath: function () {
      L.Polyline.prototype._updatePath.call(this);
      var r = this._renderer;
      if (!r._drawing || !this._parts.length) return;
      var ctx = r._ctx, o = this.options, side = o.side, h = o.toothSize, w = 0.8 * h;
      ctx.save();
      ctx.setLineDash([]);
      ctx.globalAlpha = 1;
      ctx.fillStyle = o.color;
      var mid = null, half = 0, total = 0, rings = this._rings, j, ring;
      for (j = 0; j < rings.length; j++) {
        ring = rings[j];
        for (var q = 1; q < ring.length; q++) total += ring[q].distanceTo(ring[q - 1]);
      }
      half = total / 2;
      ctx.beginPath();
      var walked = 0;
      for (j = 0; j < rings.length; j++) {
        ring = rings[j];
        var next = o.teeth / 2;
        for (var k = 1; k < ring.length; k++) {
          var a = ring[k - 1], b = ring[k], len = a.distanceTo(b);
          if (len === 0) continue;
          var tx = (b.x - a.x) / len, ty = (b.y - a.y) / len;
          if (!mid && walked + len >= half) {
            var f = half - walked;
            mid = [a.x + tx * f, a.y + ty * f];
          }
          while (side && next <= len) {
            // right-hand normal of the digitising direction on screen (y down) is (-ty, tx)
            var px = a.x + tx * next, py = a.y + ty * next;
            var nx = -ty * side, ny = tx * side;
            ctx.moveTo(px - tx * w / 2, py - ty * w / 2);
            ctx.lineTo(px + nx * h, py + ny * h);
            ctx.lineTo(px + tx * w / 2, py + ty * w / 2);
            ctx.closePath();
            next += o.teeth;
          }
          next -= len;
          walked += len;
        }
      }
      ctx.fill();
      if (mid && o.label) {
        var text = o.label;
        ctx.font = FONT;
        ctx.textAlign = "center";
        ctx.textBaseline = "middle";
        var tw = ctx.measureText(text).width + 10;
        ctx.fillStyle = "rgba(255,255,255,0.92)";
        ctx.strokeStyle = o.color;
        ctx.lineWidth = 1.5;
        ctx.setLineDash(o.oos ? [3, 2] : []);
        ctx.beginPath();
        ctx.rect(mid[0] - tw / 2, mid[1] - 8, tw, 16);
        ctx.fill();
        ctx.stroke();
        ctx.fillStyle = o.color;
        ctx.fillText(text, mid[0], mid[1] + 0.5);
      }
      ctx.restore();
    }
  });

  // ---- labelled areas (domains, thrust sheets) --------------------------
  var Area = L.Polygon.extend({
    options: { renderer: CANVAS },
    _updatePath: function () {
      L.Polygon.prototype._updatePath.call(this);
      var r = this._renderer, o = this.options;
      if (!r._drawing || !o.label || !this._parts.length) return;
      var p = this._map.latLngToLayerPoint(o.labelAt);
      var ctx = r._ctx;
      ctx.save();
      ctx.globalAlpha = 1;
      ctx.font = "700 12px system-ui, -apple-system, 'Segoe UI', sans-serif";
      ctx.textAlign = "center";
      ctx.textBaseline = "middle";
      ctx.lineWidth = 3.5;
      ctx.strokeStyle = "rgba(255,255,255,0.9)";
      ctx.fillStyle = o.color;
      labelText(ctx, o.label, p.x, p.y);
      ctx.restore();
    }
  });

  function popupFor(title, rows, image) {
    var box = el("div", "tm-pop");
    box.appendChild(el("div", "tm-pop-title", title));
    if (image) {
      var img = el("img", "tm-thumb");
      img.alt = "stereonet of " + title;
      img.src = image;
      box.appendChild(img);
    }
    box.appendChild(table(rows));
    return box;
  }

  function register(key, layer, count) {
    layer._tmKey = key;
    TM.layers[key] = layer;
    TM.counts[key] = count;
    TM.order.push(key);
    return layer;
  }

  TM.orientationLayer = function (key, data, options) {
    var layer = new OrientationSet(data, L.extend({ key: key }, options || {}));
    return register(key, layer, data.n);
  };

  function group(key, features, make) {
    var g = L.featureGroup();
    for (var i = 0; i < features.length; i++) g.addLayer(make(features[i], i));
    return register(key, g, features.length);
  }

  TM.thrustLayer = function (key, data) {
    return group(key, data.features, function (f) {
      var line = new ThrustTrace(L.GeoJSON.coordsToLatLngs(f.c, 1), {
        color: f.color, side: f.side, label: f.label, oos: f.oos,
        dashArray: f.oos ? "9 5" : null, weight: 2.2
      });
      line.bindPopup(function () { return popupFor(f.title, f.rows); },
                     { maxWidth: 320, maxHeight: 420 });
      return line;
    });
  };

  TM.areaLayer = function (key, data) {
    return group(key, data.features, function (f) {
      var area = new Area(L.GeoJSON.coordsToLatLngs(f.c, f.depth), {
        color: f.color, weight: data.weight, dashArray: data.dash, fillColor: f.fill,
        fillOpacity: data.fillOpacity, label: f.label, labelAt: [f.at[1], f.at[0]]
      });
      area.bindPopup(function () { return popupFor(f.title, f.rows, f.image); },
                     { maxWidth: 360, maxHeight: 420 });
      return area;
    });
  };

  // ---- page furniture: title, legend, caution ---------------------------
  function sampleCanvas(draw) {
    var c = el("canvas", "tm-sample");
    var ratio = window.devicePixelRatio || 1;
    c.width = 34 * ratio; c.height = 22 * ratio;
    c.style.width = "34px"; c.style.height = "22px";
    var ctx = c.getContext("2d");
    ctx.scale(ratio, ratio);
    draw(ctx);
    return c;
  }

  function symbolSample(code, style) {
    return sampleCanvas(function (ctx) {
      ctx.lineWidth = 1.6; ctx.lineCap = "round";
      ctx.strokeStyle = ctx.fillStyle = style.color;
      var az = code >= 4 ? 90 : 135;
      ctx.beginPath(); strokeSymbol(ctx, code, style.tick, 15, 11, az, 8); ctx.stroke();
      ctx.beginPath(); fillSymbol(ctx, code, style.tick, 15, 11, az, 8); ctx.fill();
    });
  }

  function lineSample(color, dash, teeth) {
    return sampleCanvas(function (ctx) {
      ctx.strokeStyle = ctx.fillStyle = color; ctx.lineWidth = 2.2;
      ctx.setLineDash(dash || []);
      ctx.beginPath(); ctx.moveTo(2, 8); ctx.lineTo(32, 8); ctx.stroke();
      if (teeth) {
        ctx.beginPath();
        for (var x = 9; x < 32; x += 14) { ctx.moveTo(x - 3, 8); ctx.lineTo(x, 15); ctx.lineTo(x + 3, 8); }
        ctx.fill();
      }
    });
  }

  function areaSample(stroke, fill, dash) {
    return sampleCanvas(function (ctx) {
      ctx.fillStyle = fill; ctx.strokeStyle = stroke; ctx.lineWidth = 1.6;
      ctx.setLineDash(dash || []);
      ctx.fillRect(4, 4, 26, 14); ctx.strokeRect(4, 4, 26, 14);
    });
  }

  function rampSample(colors) {
    return sampleCanvas(function (ctx) {
      var g = ctx.createLinearGradient(2, 0, 32, 0);
      for (var i = 0; i < colors.length; i++) g.addColorStop(i / Math.max(colors.length - 1, 1), colors[i]);
      ctx.fillStyle = g; ctx.fillRect(2, 6, 30, 10);
    });
  }

  var SAMPLE = {
    symbol: function (e) { return symbolSample(e.code, e.style); },
    line: function (e) { return lineSample(e.color, e.dash, e.teeth); },
    area: function (e) { return areaSample(e.color, e.fill, e.dash); },
    ramp: function (e) { return rampSample(e.colors); },
    image: function () { return areaSample("#8b8378", "#d8cfc0"); }
  };

  function legendControl(sections) {
    var Legend = L.Control.extend({
      options: { position: "bottomright" },
      onAdd: function () {
        var box = el("details", "tm-panel tm-legend");
        box.open = true;
        box.appendChild(el("summary", "tm-legend-title", "Legend"));
        for (var s = 0; s < sections.length; s++) {
          var sec = sections[s], head = el("div", "tm-legend-head", sec.title);
          head.setAttribute("data-layer", sec.key);
          if (sec.key in TM.counts) {
            head.setAttribute("data-count", String(TM.counts[sec.key]));
            head.appendChild(el("span", "tm-count", "(" + TM.counts[sec.key] + ")"));
          }
          box.appendChild(head);
          for (var i = 0; i < sec.entries.length; i++) {
            var e = sec.entries[i], row = el("div", "tm-legend-row");
            row.appendChild(SAMPLE[e.kind](e));
            row.appendChild(el("span", null, e.label));
            box.appendChild(row);
          }
        }
        L.DomEvent.disableClickPropagation(box);
        L.DomEvent.disableScrollPropagation(box);
        return box;
      }
    });
    return new Legend();
  }

  function textControl(position, cls, text) {
    var C = L.Control.extend({
      options: { position: position },
      onAdd: function () {
        var box = el("div", "tm-panel " + cls, text);
        L.DomEvent.disableClickPropagation(box);
        return box;
      }
    });
    return new C();
  }

  function keepOrder(map) {
    for (var k = 0; k < TM.order.length; k++) {
      var layer = TM.layers[TM.order[k]];
      if (layer.bringToFront && map.hasLayer(layer)) layer.bringToFront();
    }
  }

  TM.finish = function (map, page) {
    // no animation: the page is ready only once the first view is final
    map.fitBounds(page.bounds, { animate: false, padding: [20, 20] });
    var title = textControl("topleft", "tm-title", page.title).addTo(map);
    var corner = title.getContainer().parentNode;
    corner.insertBefore(title.getContainer(), corner.firstChild);
    if (page.subtitle) title.getContainer().appendChild(el("div", "tm-subtitle", page.subtitle));
    legendControl(page.legend).addTo(map);
    L.control.scale({ imperial: false, maxWidth: 160 }).addTo(map);
    textControl("bottomleft", "tm-caution", page.caution).addTo(map);
    map.on("overlayadd", function () { keepOrder(map); });
    keepOrder(map);
    var counts = el("div", "tm-counts");
    counts.hidden = true;
    for (var key in TM.counts) counts.setAttribute("data-" + key.replace(/_/g, "-"), String(TM.counts[key]));
    map.getContainer().appendChild(counts);
    TM.map = map;
    TM.timing = { finish: performance.now() };
    L.Util.requestAnimFrame(function () {
      L.Util.requestAnimFrame(function () {
        TM.timing.ready = performance.now();
        TM.ready = true;
      });
    });
  };
})();
