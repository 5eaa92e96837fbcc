// The explorer of a kinmap report: draws the unit map, the site map, the
// sites table and a site's page from the JSON object embedded in the page
// (export/explorer.go), with no network access. It sets data-ready on the
// body once the page can be used.
(function () {
  "use strict";
  var D = JSON.parse(document.getElementById("kinmap-data").textContent);
  var state = { regime: 0, unit: -1, site: "", query: "", sortKey: "id", sortDir: 1 };
  var colour = {}, description = {}, label = {};
  D.regimes.forEach(function (g) {
    colour[g.id] = g.colour; description[g.id] = g.desc;
    // The user's name and status of the regime (kinmap label), if any.
    label[g.id] = (g.name ? " “" + g.name + "”" : "") + (g.status ? " [" + g.status + "]" : "");
  });
  var byID = {};
  D.sites.forEach(function (s, i) { byID[s.id] = s; s.index = i; });
  var $ = function (id) { return document.getElementById(id); };

  function esc(v) {
    return String(v == null ? "" : v).replace(/[&<>"']/g, function (c) {
      return { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" }[c];
    });
  }
  function fmt(v) {
    if (typeof v !== "number") return v == null ? "–" : String(v);
    return Math.abs(v) >= 1e5 || (v !== 0 && Math.abs(v) < 1e-3) ? v.toExponential(2) : String(+v.toPrecision(4));
  }
  function swatch(id) { return '<span class="sw" style="background:' + (colour[id] || "#bbb") + '"></span>'; }
  function when(minutes) {
    var d = new Date((D.start + minutes * 60) * 1000);
    return d.toISOString().slice(0, 16).replace("T", " ") + " UTC";
  }

  // ---- regimes ------------------------------------------------------
  function drawRegimeChips() {
    $("ex-regimes").innerHTML = D.regimes.map(function (g) {
      return '<button type="button" class="chip" data-regime="' + g.id + '" title="' + esc(g.desc) + '">' +
        swatch(g.id) + "Regime " + g.id + esc(label[g.id]) + "</button>";
    }).join("") + '<button type="button" class="chip" id="ex-clear">All sites</button>';
  }

  // ---- unit map -----------------------------------------------------
  var hex = D.cells === "hex", pitch = hex ? Math.sqrt(3) / 2 : 1;
  var unitSites = D.units.map(function () { return []; });
  D.sites.forEach(function (s) { if (s.unit >= 0 && s.unit < unitSites.length) unitSites[s.unit].push(s.id); });
  function cellPos(u) {
    var c = u % D.cols, r = Math.floor(u / D.cols);
    return [c + (hex && r % 2 ? 0.5 : 0), r * pitch];
  }
  function drawUnitMap() {
    var margin = D.torus ? 1.6 : 0.6;
    var px = D.cols, py = D.rows * pitch;
    var x0 = -0.5 - margin, y0 = -0.5 - margin, x1 = px + (hex ? 0 : -0.5) + margin, y1 = py - pitch + 0.5 + margin;
    var s = Math.min(30, 540 / (x1 - x0));
    var W = (x1 - x0) * s, H = (y1 - y0) * s;
    var R = s / Math.sqrt(3), h = s / 2;
    var shape = function (x, y) {
      var X = (x - x0) * s, Y = (y - y0) * s, p = [];
      if (!hex) return "M" + (X - h) + " " + (Y - h) + "h" + s + "v" + s + "h" + -s + "z";
      for (var k = 0; k < 6; k++) {
        var a = Math.PI / 6 + k * Math.PI / 3;
        p.push((X + R * Math.cos(a)).toFixed(1) + " " + (Y + R * Math.sin(a)).toFixed(1));
      }
      return "M" + p.join("L") + "z";
    };
    var out = [];
    var copies = D.torus ? [-1, 0, 1] : [0];
    copies.forEach(function (j) {
      copies.forEach(function (i) {
        var main = i === 0 && j === 0;
        D.units.forEach(function (unit, u) {
          var p = cellPos(u), x = p[0] + i * px, y = p[1] + j * py;
          if (x < x0 - 0.5 || x > x1 + 0.5 || y < y0 - 0.5 || y > y1 + 0.5) return;
          out.push('<path class="unit' + (main ? "" : " copy") + '" data-u="' + u + '" data-g="' + unit.g +
            '" d="' + shape(x, y) + '" fill="' + (colour[unit.g] || "#ccc") + '"/>');
        });
      });
    });
    if (D.torus) {
      out.push('<rect class="seam" x="' + (-0.5 - x0) * s + '" y="' + (-pitch / 2 - y0) * s + '" width="' + px * s +
        '" height="' + py * s + '"/>');
    }
    out.push('<path id="ex-unit-mark" class="mark" d=""/>');
    $("ex-units").innerHTML = '<svg viewBox="0 0 ' + W.toFixed(0) + " " + H.toFixed(0) + '" width="' + W.toFixed(0) +
      '" height="' + H.toFixed(0) + '" role="img" aria-label="Map of the units">' + out.join("") + "</svg>";
    drawUnitMap.shape = shape;
  }
  function unitInfo(u) {
    var unit = D.units[u], c = u % D.cols, r = Math.floor(u / D.cols), ids = unitSites[u];
    var rows = unit.p.map(function (p) {
      return "<tr><td>" + esc(D.features[p[0]]) + '</td><td class="num">' + (p[1] > 0 ? "+" : "") + fmt(p[1]) +
        '</td><td class="num">' + fmt(p[2]) + "</td></tr>";
    }).join("");
    return "<strong>Unit " + c + ", " + r + "</strong> " + swatch(unit.g) + "regime " + unit.g +
      "<br>" + unit.h + " windows won · " + ids.length + " site" + (ids.length === 1 ? "" : "s") + " now here" +
      (ids.length ? ": " + esc(ids.slice(0, 8).join(", ")) + (ids.length > 8 ? " …" : "") : "") +
      '<table class="mini"><thead><tr><th>Feature</th><th class="num">scaled</th><th class="num">value</th></tr></thead><tbody>' +
      rows + "</tbody></table>";
  }

  // ---- site map -----------------------------------------------------
  var geo = null;
  function drawSiteMap() {
    var pts = [];
    D.sites.forEach(function (s) {
      if (s.at) pts.push(s.at);
      (s.tr || []).forEach(function (seg) { for (var k = 1; k + 1 < seg.length; k += 2) pts.push([seg[k], seg[k + 1]]); });
    });
    if (!pts.length) { $("ex-sitemap").innerHTML = '<p class="muted">No site has a position.</p>'; return; }
    // The projection of sites.png: equirectangular, longitude shrunk by
    // the cosine of the middle latitude, a margin of 6 % of the span.
    var lon0 = Infinity, lon1 = -Infinity, lat0 = Infinity, lat1 = -Infinity;
    pts.forEach(function (p) { lon0 = Math.min(lon0, p[0]); lon1 = Math.max(lon1, p[0]); lat0 = Math.min(lat0, p[1]); lat1 = Math.max(lat1, p[1]); });
    var padLon = Math.max(0.06 * (lon1 - lon0), 0.01), padLat = Math.max(0.06 * (lat1 - lat0), 0.01);
    lon0 -= padLon; lon1 += padLon; lat0 = Math.max(-90, lat0 - padLat); lat1 = Math.min(90, lat1 + padLat);
    var mid = (lat0 + lat1) / 2, cos = Math.max(0.05, Math.cos(mid * Math.PI / 180));
    var ky = Math.min(540 / ((lon1 - lon0) * cos), 440 / (lat1 - lat0)), kx = ky * cos;
    var W = (lon1 - lon0) * kx, H = (lat1 - lat0) * ky;
    geo = { x: function (lon) { return ((lon - lon0) * kx).toFixed(1); }, y: function (lat) { return ((lat1 - lat) * ky).toFixed(1); } };
    var out = ['<rect class="frame" x="0" y="0" width="' + W.toFixed(0) + '" height="' + H.toFixed(0) + '"/>'];
    D.sites.forEach(function (s) {
      (s.tr || []).forEach(function (seg) {
        var p = [];
        for (var k = 1; k + 1 < seg.length; k += 2) p.push(geo.x(seg[k]) + "," + geo.y(seg[k + 1]));
        out.push('<polyline class="track" data-site="' + esc(s.id) + '" data-g="' + seg[0] + '" stroke="' + (colour[seg[0]] || "#888") + '" points="' + p.join(" ") + '"/>');
      });
    });
    D.sites.forEach(function (s) {
      if (!s.at) return;
      out.push('<circle class="site" data-site="' + esc(s.id) + '" data-g="' + s.g + '" cx="' + geo.x(s.at[0]) + '" cy="' + geo.y(s.at[1]) +
        '" r="4" fill="' + (colour[s.g] || "#bbb") + '"><title>' + esc(s.id) + "</title></circle>");
    });
    // Scale bar: a round length of about a fifth of the width, measured
    // east–west along the middle latitude (haversine, mean Earth radius
    // 6371.0088 km, IUGG).
    var rad = Math.PI / 180, dLon = (lon1 - lon0) * rad, c = Math.cos(mid * rad);
    var a = c * c * Math.sin(dLon / 2) * Math.sin(dLon / 2);
    var spanKm = 2 * 6371.0088 * Math.asin(Math.min(1, Math.sqrt(a))), target = spanKm / 5;
    var p10 = Math.pow(10, Math.floor(Math.log10(target))), km = p10;
    [5, 2, 1].some(function (k) { if (k * p10 <= target) { km = k * p10; return true; } return false; });
    var bar = km / spanKm * W;
    out.push('<g class="scale" transform="translate(12,' + (H - 14).toFixed(0) + ')"><rect x="-4" y="-16" width="' + (bar + 60).toFixed(0) +
      '" height="24" fill="#fff" opacity=".85"/><path d="M0 0h' + bar.toFixed(1) + 'M0 -5v5M' + bar.toFixed(1) + ' -5v5"/><text x="' +
      (bar + 6).toFixed(1) + '" y="3">' + km + " km</text></g>");
    $("ex-sitemap").innerHTML = '<svg viewBox="0 0 ' + W.toFixed(0) + " " + H.toFixed(0) + '" width="' + W.toFixed(0) + '" height="' +
      H.toFixed(0) + '" role="img" aria-label="Site map">' + out.join("") + "</svg>";
  }

  // ---- sites table --------------------------------------------------
  var columns = [
    { key: "id", label: "Site", get: function (s) { return s.id; } }
  ];
  D.attrs.forEach(function (name, i) { columns.push({ key: "a" + i, label: name, get: function (s) { return s.a ? s.a[i] : null; } }); });
  columns.push(
    { key: "g", label: "Regime", num: true, get: function (s) { return s.g; }, html: function (s) { return swatch(s.g) + s.g; } },
    { key: "sw", label: "Switches", num: true, get: function (s) { return s.sw; } },
    { key: "ls", label: "Last switch", get: function (s) { return s.ls || ""; } },
    { key: "u", label: "Unfamiliar windows", num: true, get: function (s) { return s.u; } }
  );
  // A rank of attention, when the run gives each site one (field "rank").
  if (D.sites.some(function (s) { return s.rank != null; })) {
    columns.splice(1, 0, { key: "rank", label: "Rank", num: true, get: function (s) { return s.rank; } });
  }
  function drawTableHead() {
    $("ex-sites").querySelector("thead").innerHTML = "<tr>" + columns.map(function (c) {
      var mark = state.sortKey === c.key ? (state.sortDir > 0 ? " ▲" : " ▼") : "";
      return '<th data-key="' + c.key + '"' + (c.num ? ' class="num"' : "") + ' tabindex="0">' + esc(c.label) + mark + "</th>";
    }).join("") + "</tr>";
  }
  function shown() {
    var q = state.query.toLowerCase();
    var list = D.sites.filter(function (s) {
      if (state.regime && s.g !== state.regime) return false;
      if (state.unit >= 0 && s.unit !== state.unit) return false;
      if (!q) return true;
      if (s.id.toLowerCase().indexOf(q) >= 0) return true;
      return (s.a || []).some(function (v) { return v != null && String(v).toLowerCase().indexOf(q) >= 0; });
    });
    var col = columns.filter(function (c) { return c.key === state.sortKey; })[0] || columns[0];
    list.sort(function (a, b) {
      var x = col.get(a), y = col.get(b);
      if (x == null || y == null) return (x == null) - (y == null);
      var d = typeof x === "number" && typeof y === "number" ? x - y : String(x).localeCompare(String(y), undefined, { numeric: true });
      return d * state.sortDir || a.index - b.index;
    });
    return list;
  }
  function drawTable() {
    var list = shown();
    $("ex-sites").querySelector("tbody").innerHTML = list.map(function (s) {
      return '<tr data-site="' + esc(s.id) + '"' + (s.id === state.site ? ' class="on"' : "") + ">" + columns.map(function (c) {
        return "<td" + (c.num ? ' class="num"' : "") + ">" + (c.html ? c.html(s) : esc(fmt(c.get(s)))) + "</td>";
      }).join("") + "</tr>";
    }).join("");
    var what = [];
    if (state.regime) what.push("in regime " + state.regime + " now");
    if (state.unit >= 0) what.push("now on unit " + (state.unit % D.cols) + ", " + Math.floor(state.unit / D.cols));
    if (state.query) what.push("matching “" + esc(state.query) + "”");
    $("ex-count").innerHTML = list.length + " of " + D.sites.length + " sites" + (what.length ? " " + what.join(", ") : "");
  }

  // ---- selection everywhere -----------------------------------------
  function highlight() {
    document.querySelectorAll("#ex-regimes .chip").forEach(function (b) {
      b.classList.toggle("on", +b.getAttribute("data-regime") === state.regime);
    });
    var svgs = ["ex-units", "ex-sitemap"].map($);
    svgs.forEach(function (el) { el.classList.toggle("dim", state.regime > 0); });
    document.querySelectorAll("#ex-units .unit, #ex-sitemap .site, #ex-sitemap .track").forEach(function (el) {
      el.classList.toggle("sel", state.regime > 0 && +el.getAttribute("data-g") === state.regime);
    });
    document.querySelectorAll("#ex-sitemap .picked").forEach(function (el) { el.classList.remove("picked"); });
    var mark = $("ex-unit-mark"), s = byID[state.site], u = s ? s.unit : state.unit;
    if (mark) {
      if (u >= 0) { var p = cellPos(u); mark.setAttribute("d", drawUnitMap.shape(p[0], p[1])); } else mark.setAttribute("d", "");
    }
    if (s) {
      document.querySelectorAll('#ex-sitemap [data-site="' + CSS.escape(s.id) + '"]').forEach(function (el) {
        el.classList.add("picked");
        if (el.tagName === "circle") el.parentNode.appendChild(el);
      });
    }
  }
  function update() { drawTable(); highlight(); }
  function selectRegime(id) { state.regime = state.regime === id ? 0 : id; state.unit = -1; update(); }
  function selectSite(id) {
    state.site = id;
    drawSitePage(byID[id]);
    update();
    if (location.hash !== "#site=" + encodeURIComponent(id)) history.replaceState(null, "", "#site=" + encodeURIComponent(id));
  }

  // ---- site page ----------------------------------------------------
  function drawSitePage(s) {
    var el = $("ex-site");
    if (!s) { el.innerHTML = ""; return; }
    var W = 960, x = function (m) { return (m / D.end * W).toFixed(1); };
    var strip = [];
    for (var k = 0; k + 2 < s.st.length; k += 3) {
      strip.push('<rect x="' + x(s.st[k]) + '" y="18" width="' + Math.max(0.5, x(s.st[k + 1]) - x(s.st[k])).toFixed(1) +
        '" height="26" fill="' + (colour[s.st[k + 2]] || "#ccc") + '"><title>regime ' + s.st[k + 2] + ", " + when(s.st[k]) + " to " + when(s.st[k + 1]) + "</title></rect>");
    }
    (s.odd || []).forEach(function (m) { strip.push('<path class="odd" d="M' + x(m) + ' 48v7"><title>unfamiliar window from ' + when(m) + "</title></path>"); });
    var changes = [];
    for (k = 0; k + 3 < (s.ch || []).length; k += 4) {
      changes.push({ at: s.ch[k], from: s.ch[k + 1], to: s.ch[k + 2], conf: s.ch[k + 3] });
      strip.push('<path class="switch" d="M' + x(s.ch[k]) + ' 12v38M' + x(s.ch[k]) + " 12l-5 -7h10z\"><title>switch " + s.ch[k + 1] + " → " + s.ch[k + 2] +
        " at " + when(s.ch[k]) + ", confidence " + (s.ch[k + 3] / 100).toFixed(2) + "</title></path>");
    }
    // Drifts that led to a switch: a bracket above the strip from the
    // onset to the switch.
    for (k = 0; k + 2 < (s.on || []).length; k += 3) {
      strip.push('<path class="onset" d="M' + x(s.on[k]) + " 14V9H" + x(s.on[k + 1]) + '"><title>drift towards regime ' + s.on[k + 2] +
        " from " + when(s.on[k]) + "</title></path>");
    }
    // Shared conditions the site showed with most of its regime: a dashed
    // veil over the strip, listed below it.
    var shared = [];
    for (k = 0; k + 3 < (s.sh || []).length; k += 4) {
      var said = when(s.sh[k]) + (s.sh[k + 1] < D.end ? " to " + when(s.sh[k + 1]) : " to the last window") +
        ": like most sites of regime " + s.sh[k + 2] + ", looked like regime " + s.sh[k + 3] + " (a fleet-wide change, not a switch)";
      strip.push('<path class="shared" d="M' + x(s.sh[k]) + " 15h" + Math.max(2, x(s.sh[k + 1]) - x(s.sh[k])).toFixed(1) +
        'v32H' + x(s.sh[k]) + 'z"><title>' + esc(said) + "</title></path>");
      shared.push(said);
    }
    // Events of the site (--events), below the strip: a bar for an
    // interval, a triangle for a point; times outside the run at its edge.
    var clamp = function (m) { return Math.min(Math.max(m, 0), D.end); };
    var events = (s.ev || []).map(function (e) {
      var said = when(e.s) + (e.e > e.s ? " to " + when(e.e) : "") + ": " + e.l + (e.n ? " — " + e.n : "");
      var a = x(clamp(e.s));
      strip.push(e.e > e.s ?
        '<rect class="event" x="' + a + '" y="59" width="' + Math.max(2, x(clamp(e.e)) - a).toFixed(1) + '" height="6"><title>' + esc(said) + "</title></rect>" :
        '<path class="event" d="M' + a + ' 58l-5 8h10z"><title>' + esc(said) + "</title></path>");
      return said;
    });
    var ticks = [];
    for (var day = 0; day * 1440 <= D.end; day += Math.max(1, Math.ceil(D.end / 1440 / 10))) {
      ticks.push('<text x="' + x(day * 1440) + '" y="84">' + when(day * 1440).slice(5, 10) + "</text>");
    }
    var attrs = D.attrs.map(function (name, i) { return "<tr><th>" + esc(name) + "</th><td>" + esc(fmt(s.a ? s.a[i] : null)) + "</td></tr>"; }).join("");
    var html = "<h3>Site " + esc(s.id) + "</h3>" +
      '<p>Now in ' + swatch(s.g) + "regime " + s.g + esc(label[s.g] || "") + " (" + esc(description[s.g] || "") + "); " + s.w + " windows, " + s.sw + " switch" + (s.sw === 1 ? "" : "es") +
      ", " + s.u + " unfamiliar" + (s.m ? "; mobile, shown at its last position" : "") + ".</p>" +
      (attrs ? '<table class="facts mini">' + attrs + "</table>" : "") +
      '<svg class="strip" viewBox="-10 0 ' + (W + 20) + ' 90" width="100%" role="img" aria-label="Regime strip">' + strip.join("") + ticks.join("") + "</svg>" +
      (events.length ? '<ul class="events">' + events.map(function (e) { return "<li>" + esc(e) + "</li>"; }).join("") + "</ul>" : "") +
      (shared.length ? '<ul class="shared-days">' + shared.map(function (e) { return "<li>" + esc(e) + "</li>"; }).join("") + "</ul>" : "") +
      (changes.length ? "<p>" + changes.map(function (c) {
        return "Switch " + swatch(c.from) + c.from + " → " + swatch(c.to) + c.to + " from " + when(c.at) + " (confidence " + (c.conf / 100).toFixed(2) + ")";
      }).join("<br>") + "</p>" : "");
    html += dailyPanels(s, changes);
    el.innerHTML = html;
  }
  function dailyPanels(s, changes) {
    var d = D.daily;
    if (!d) return "";
    var el = $("kinmap-daily");
    if (!el) { // the browser has not read that far yet
      document.addEventListener("DOMContentLoaded", function () { drawSitePage(byID[state.site]); });
      return '<p class="muted">Reading the daily readings…</p>';
    }
    if (!dailyPanels.sites) dailyPanels.sites = JSON.parse(el.textContent);
    var b64 = dailyPanels.sites[s.id];
    if (!b64) return '<p class="muted">The daily readings of this site were left out to keep the page small (see the note above).</p>';
    var bin = atob(b64), view = new DataView(new ArrayBuffer(bin.length));
    for (var i = 0; i < bin.length; i++) view.setUint8(i, bin.charCodeAt(i));
    var W = 300, H = 110, top = 8, bottom = 20, dayX = function (k) { return (k + 0.5) / d.days * W; };
    var offset = (d.day0 - D.start) / 60; // minutes of the first day after the strip's start
    return '<div class="multiples">' + d.channels.map(function (name, c) {
      var val = function (k, q) {
        var v = view.getUint16(2 * ((c * d.days + k) * 3 + q), true);
        return v === 65535 ? null : d.lo[c] + v / 65534 * (d.hi[c] - d.lo[c]);
      };
      // Each panel spans the site's own range, so that a change shows
      // however small beside the fleet's spread.
      var lo = Infinity, hi = -Infinity;
      for (var j = 0; j < d.days; j++) {
        if (val(j, 1) != null) { lo = Math.min(lo, val(j, 0)); hi = Math.max(hi, val(j, 2)); }
      }
      if (!(hi > lo)) { lo = lo === Infinity ? 0 : lo - 1; hi = lo + 2; }
      var y = function (v) { return (top + (1 - (hi > lo ? (v - lo) / (hi - lo) : 0.5)) * (H - top - bottom)).toFixed(1); };
      var band = [], runs = [], line = [], runLines = [];
      for (var k = 0; k < d.days; k++) {
        var p05 = val(k, 0), med = val(k, 1), p95 = val(k, 2);
        if (med == null) {
          if (band.length) { runs.push(band); runLines.push(line); band = []; line = []; }
          continue;
        }
        band.push([dayX(k), p05, p95]); line.push(dayX(k).toFixed(1) + "," + y(med));
      }
      if (band.length) { runs.push(band); runLines.push(line); }
      var parts = runs.map(function (b) {
        var up = b.map(function (p) { return p[0].toFixed(1) + "," + y(p[2]); }), down = b.slice().reverse().map(function (p) { return p[0].toFixed(1) + "," + y(p[1]); });
        return '<polygon class="band" points="' + up.concat(down).join(" ") + '"/>';
      });
      runLines.forEach(function (l) { parts.push('<polyline class="median" points="' + l.join(" ") + '"/>'); });
      changes.forEach(function (ch) {
        var cx = ((ch.at - offset) / 1440 / d.days * W).toFixed(1);
        parts.push('<path class="switch" d="M' + cx + " " + top + "V" + (H - bottom) + '"/>');
      });
      return '<figure class="multiple"><figcaption>' + esc(name) + '</figcaption><svg viewBox="-44 0 ' + (W + 48) + " " + H + '" width="' + (W + 48) + '" height="' + H + '">' +
        '<rect class="frame" x="0" y="' + top + '" width="' + W + '" height="' + (H - top - bottom) + '"/>' + parts.join("") +
        '<text class="axis" x="-4" y="' + (top + 4) + '">' + esc(fmt(hi)) + '</text><text class="axis" x="-4" y="' + (H - bottom) + '">' + esc(fmt(lo)) + "</text>" +
        '<text class="days" x="0" y="' + (H - 4) + '">' + new Date(d.day0 * 1000).toISOString().slice(5, 10) + '</text><text class="days end" x="' + W + '" y="' + (H - 4) + '">' +
        new Date((d.day0 + (d.days - 1) * 86400) * 1000).toISOString().slice(5, 10) + "</text></svg></figure>";
    }).join("") + '</div><p class="muted">Each day of each channel: the median (line) and the band from the 5th to the 95th percentile of the day’s readings (UTC days); dashed lines mark switches. Each panel spans this site’s own range.</p>';
  }

  // ---- events -------------------------------------------------------
  function wire() {
    $("ex-regimes").addEventListener("click", function (e) {
      var b = e.target.closest("button");
      if (!b) return;
      if (b.id === "ex-clear") { state.regime = 0; state.unit = -1; state.query = ""; $("ex-search").value = ""; update(); return; }
      selectRegime(+b.getAttribute("data-regime"));
    });
    var units = $("ex-units");
    units.addEventListener("mouseover", function (e) {
      var u = e.target.getAttribute && e.target.getAttribute("data-u");
      if (u != null) $("ex-unit-info").innerHTML = unitInfo(+u);
    });
    units.addEventListener("click", function (e) {
      var u = e.target.getAttribute && e.target.getAttribute("data-u");
      if (u == null) return;
      u = +u;
      state.unit = state.unit === u ? -1 : u;
      state.regime = 0;
      $("ex-unit-info").innerHTML = unitInfo(u);
      update();
    });
    $("ex-sitemap").addEventListener("click", function (e) {
      var id = e.target.getAttribute && e.target.getAttribute("data-site");
      if (id) selectSite(id);
    });
    $("ex-sites").addEventListener("click", function (e) {
      var th = e.target.closest("th");
      if (th) {
        var key = th.getAttribute("data-key");
        state.sortDir = state.sortKey === key ? -state.sortDir : 1;
        state.sortKey = key;
        drawTableHead(); drawTable();
        return;
      }
      var tr = e.target.closest("tr[data-site]");
      if (tr) selectSite(tr.getAttribute("data-site"));
    });
    $("ex-search").addEventListener("input", function (e) { state.query = e.target.value.trim(); drawTable(); });
    window.addEventListener("hashchange", openFromHash);
  }
  // openFromHash opens the site that the address names (#site=ID).
  function openFromHash() {
    var m = /^#site=(.*)$/.exec(location.hash), id = m && decodeURIComponent(m[1]);
    if (id && byID[id] && id !== state.site) selectSite(id);
    return !!(id && byID[id]);
  }

  drawRegimeChips();
  drawUnitMap();
  drawSiteMap();
  drawTableHead();
  wire();
  var omitted = D.omitted || [];
  $("ex-omitted").innerHTML = omitted.map(esc).join(" ");
  if (!openFromHash()) update();
  window.kinmapReadyAt = performance.now();
  document.body.setAttribute("data-ready", "1");
})();
