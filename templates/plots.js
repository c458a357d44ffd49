/* Zoom and cursors for the spectrum and envelope plots of an HTML report.

   Each <figure data-plot="ID"> has a static SVG (what prints) and a
   <script type="application/json" id="ID"> with its data: frequencies x, values y,
   marks, the first view xlim, the unit of the frequency axis and the axis words.
   On screen this script draws the same plot again into a second SVG it can redraw,
   and adds a row of controls:
     - zoom: drag across the plot, or type the band in the two boxes; "whole" goes back;
     - harmonic cursor: click a line: marks f, 2f, 3f ... across the view;
     - sideband cursor: click a carrier: marks carrier +- n x spacing (the spacing box).
   The values are read out in the plot's frequency unit. No network, no library:
   it works from a file. Print CSS hides all of it and shows the static SVG. */
(function () {
  "use strict";
  var NS = "http://www.w3.org/2000/svg";
  var W = 760, H = 330, L = 64, R = 16, T = 64, B = 40;   // the drawing's size and margins (title, 3 rows of labels)
  var ROWS = 3, CHAR_PX = 5.6, LEGEND = 16;
  var HARMONICS = 10, SIDEBANDS = 3, SNAP_PX = 4, DRAG_PX = 5;

  function make(name, attrs, parent) {
    var e = document.createElementNS(NS, name);
    for (var k in attrs) { e.setAttribute(k, attrs[k]); }
    if (parent) { parent.appendChild(e); }
    return e;
  }

  function html(name, attrs, parent, text) {
    var e = document.createElement(name);
    for (var k in attrs) { e.setAttribute(k, attrs[k]); }
    if (text) { e.textContent = text; }
    if (parent) { parent.appendChild(e); }
    return e;
  }

  function number(v) {                 // a frequency as the reader wants it: 4 significant digits or more
    var a = Math.abs(v);
    return a >= 1000 ? v.toFixed(0) : a >= 100 ? v.toFixed(1) : a >= 10 ? v.toFixed(2) : v.toPrecision(3);
  }

  function ticks(lo, hi, n) {          // [value, text] of round ticks (1, 2, 2.5 or 5 times a power of ten)
    var raw = (hi - lo) / n, p = Math.pow(10, Math.floor(Math.log10(raw))), step = 10 * p;
    [1, 2, 2.5, 5, 10].some(function (m) { if (m * p >= raw) { step = m * p; return true; } return false; });
    var digits = Math.max(0, -Math.floor(Math.log10(step) + 1e-9) + (Math.abs(step / p - 2.5) < 1e-9 ? 1 : 0));
    var out = [];
    for (var k = Math.ceil(lo / step - 1e-9); k * step <= hi + 1e-9 * step; k++) {
      out.push([k * step, (k * step).toFixed(digits)]);
    }
    return out;
  }

  function Plot(figure, data) {
    this.figure = figure;
    this.data = data;
    this.lo = data.xlim[0];
    this.hi = data.xlim[1];
    this.cursor = null;                // {kind: "harmonic" | "sideband", f: frequency}
    this.tools = html("div", {"class": "plot-tools"}, null);
    var t = this.tools, self = this;
    html("span", {}, t, "Band ");
    this.from = html("input", {type: "number", step: "any", size: "7", "aria-label": "from"}, t);
    html("span", {}, t, " to ");
    this.to = html("input", {type: "number", step: "any", size: "7", "aria-label": "to"}, t);
    html("span", {}, t, " " + data.unit + " ");
    html("button", {type: "button", "class": "zoom"}, t, "zoom").onclick = function () {
      self.zoom(parseFloat(self.from.value), parseFloat(self.to.value));
    };
    html("button", {type: "button", "class": "whole"}, t, "whole").onclick = function () {
      self.zoom(data.x[0], data.x[data.x.length - 1]);
    };
    html("span", {}, t, " Click places ");
    this.mode = html("select", {"aria-label": "cursor"}, t);
    [["harmonic", "a harmonic cursor"], ["sideband", "a sideband cursor"], ["none", "nothing"]].forEach(function (o) {
      html("option", {value: o[0]}, self.mode, o[1]);
    });
    html("span", {}, t, " spacing ");
    this.spacing = html("input", {type: "number", step: "any", size: "7", "aria-label": "spacing"}, t);
    this.spacing.value = data.spacing ? number(data.spacing) : "";
    html("span", {}, t, " " + data.unit + " ");
    this.spacing.onchange = this.mode.onchange = function () { self.draw(); };
    this.readout = html("output", {"class": "readout"}, t);
    this.groups = [];                   // [name, colour, dashed] of each group of marks, for the legend
    data.marks.forEach(function (m) {
      var g = self.groups.filter(function (g) { return g[0] === m.group; })[0];
      if (!m.group) { return; }
      if (g) { g[2] = g[2] && !m.strong; } else { self.groups.push([m.group, m.color, !m.strong]); }
    });
    this.svg = make("svg", {viewBox: "0 0 " + W + " " + (H + LEGEND), width: "100%", "class": "plot-live",
                            style: "font-family:Helvetica,Arial,sans-serif;font-size:11px"});
    figure.appendChild(this.tools);
    figure.appendChild(this.svg);
    figure.classList.add("live");
    this.listen();
    this.draw();
  }

  Plot.prototype.px = function (f) { return L + (f - this.lo) / (this.hi - this.lo) * (W - L - R); };
  Plot.prototype.freq = function (x) { return this.lo + (x - L) / (W - L - R) * (this.hi - this.lo); };

  Plot.prototype.at = function (event) {   // the event's position in the drawing's units
    var p = this.svg.createSVGPoint();
    p.x = event.clientX;
    p.y = event.clientY;
    return p.matrixTransform(this.svg.getScreenCTM().inverse());
  };

  Plot.prototype.zoom = function (lo, hi) {
    if (!(isFinite(lo) && isFinite(hi)) || hi === lo) { return; }
    this.lo = Math.max(Math.min(lo, hi), this.data.x[0]);
    this.hi = Math.min(Math.max(lo, hi), this.data.x[this.data.x.length - 1]);
    this.draw();
  };

  Plot.prototype.snap = function (f) {   // the highest point of the trace within SNAP_PX of f
    var x = this.data.x, y = this.data.y, tol = SNAP_PX / (W - L - R) * (this.hi - this.lo), best = -1;
    for (var i = 0; i < x.length; i++) {
      if (Math.abs(x[i] - f) <= tol && (best < 0 || y[i] > y[best])) { best = i; }
    }
    return best < 0 ? f : x[best];
  };

  Plot.prototype.listen = function () {
    var self = this, start = null, band = null;
    this.svg.addEventListener("mousedown", function (e) { start = self.at(e).x; e.preventDefault(); });
    this.svg.addEventListener("mousemove", function (e) {
      if (start === null) { return; }
      var x = self.at(e).x;
      if (!band) { band = make("rect", {"class": "band", y: T, height: H - T - B, fill: "#1f4e9a", opacity: "0.15"}, self.svg); }
      band.setAttribute("x", Math.min(start, x));
      band.setAttribute("width", Math.abs(x - start));
    });
    this.svg.addEventListener("mouseup", function (e) {
      if (start === null) { return; }
      var x = self.at(e).x, a = start;
      start = null;
      band = null;
      if (Math.abs(x - a) > DRAG_PX) { self.zoom(self.freq(a), self.freq(x)); return; }
      if (self.mode.value === "none" || x < L || x > W - R) { self.draw(); return; }
      self.cursor = {kind: self.mode.value, f: self.snap(self.freq(x))};
      self.draw();
    });
  };

  Plot.prototype.cursorLines = function () {   // [frequency, name] of each line the cursor marks
    var c = this.cursor, out = [], k;
    if (!c) { return out; }
    if (c.kind === "harmonic") {
      for (k = 1; k <= HARMONICS; k++) { out.push([k * c.f, k === 1 ? "f" : k + "f"]); }
    } else {
      var s = parseFloat(this.spacing.value);
      out.push([c.f, "carrier"]);
      for (k = 1; isFinite(s) && s > 0 && k <= SIDEBANDS; k++) {
        out.push([c.f - k * s, "-" + k]);
        out.push([c.f + k * s, "+" + k]);
      }
    }
    return out;
  };

  Plot.prototype.draw = function () {
    var d = this.data, svg = this.svg, self = this, u = d.unit, lo = this.lo, hi = this.hi;
    while (svg.firstChild) { svg.removeChild(svg.firstChild); }
    this.from.value = number(lo);
    this.to.value = number(hi);
    var x = d.x, y = d.y, top = 0, i, columns = {}, col;
    for (i = 0; i < x.length; i++) {            // the highest and lowest value of each pixel column
      if (x[i] < lo || x[i] > hi) { continue; }
      top = Math.max(top, y[i]);
      col = Math.round(this.px(x[i]));
      if (!columns[col]) { columns[col] = [y[i], y[i]]; }
      columns[col] = [Math.min(columns[col][0], y[i]), Math.max(columns[col][1], y[i])];
    }
    top = top > 0 ? 1.1 * top : 1;
    function py(v) { return H - B - v / top * (H - T - B); }
    ticks(lo, hi, 8).forEach(function (t) {
      make("line", {x1: self.px(t[0]), x2: self.px(t[0]), y1: T, y2: H - B, stroke: "#dddddd"}, svg);
      make("text", {x: self.px(t[0]), y: H - B + 14, "text-anchor": "middle", "class": "tick"}, svg).textContent = t[1];
    });
    ticks(0, top, 5).forEach(function (t) {
      make("line", {x1: L, x2: W - R, y1: py(t[0]), y2: py(t[0]), stroke: "#dddddd"}, svg);
      make("text", {x: L - 4, y: py(t[0]) + 3.5, "text-anchor": "end"}, svg).textContent = t[1];
    });
    make("rect", {x: L, y: T, width: W - L - R, height: H - T - B, fill: "none", stroke: "#444444"}, svg);
    make("text", {x: L, y: 14, "font-size": "12", "font-weight": "bold"}, svg).textContent = d.title;
    var lx = L;
    this.groups.forEach(function (g) {        // the legend: each group of marks in words
      make("line", {x1: lx + 11, x2: lx + 11, y1: H + 2, y2: H + 13, stroke: g[1], "stroke-width": "1.2",
                    "stroke-dasharray": g[2] ? "4 3" : ""}, svg);
      make("text", {x: lx + 26, y: H + 11, "font-size": "10"}, svg).textContent = g[0];
      lx += 40 + 5.8 * g[0].length;
    });
    make("text", {x: (L + W - R) / 2, y: H - 6, "text-anchor": "middle"}, svg).textContent = d.xlabel;
    make("text", {transform: "translate(12," + (H - B + T) / 2 + ") rotate(-90)", "text-anchor": "middle"},
         svg).textContent = d.ylabel;
    var rows = [[], [], []];                   // labels in rows, strong first, none over another
    d.marks.filter(function (m) { return m.x >= lo && m.x <= hi; }).sort(function (a, b) {
      return (b.strong - a.strong) || (a.rank - b.rank) || (a.x - b.x);
    }).forEach(function (m) {
      var w = CHAR_PX * m.label.length, left = self.px(m.x) + 2, flip = left + w > W - 2;
      if (flip) { left = self.px(m.x) - 2 - w; }
      for (var r = 0; r < ROWS; r++) {
        if (rows[r].every(function (s) { return left + w + 4 < s[0] || left > s[1] + 4; })) {
          rows[r].push([left, left + w]);
          make("text", {x: flip ? left + w : left, y: 30 + 11 * r, fill: m.color, "font-size": "9.5",
                        "text-anchor": flip ? "end" : "start"}, svg).textContent = m.label;
          return;
        }
      }
    });
    d.marks.forEach(function (m) {
      if (m.x < lo || m.x > hi) { return; }
      var line = make("line", {x1: self.px(m.x), x2: self.px(m.x), y1: T, y2: H - B, stroke: m.color,
                               "stroke-dasharray": m.strong ? "" : "3 2", "class": "mark"}, svg);
      make("title", {}, line).textContent = m.label + " (" + m.group + "), " + number(m.x) + " " + u;
    });
    var points = Object.keys(columns).map(Number).sort(function (a, b) { return a - b; }).map(function (c) {
      return c + "," + py(columns[c][1]).toFixed(1) + " " + c + "," + py(columns[c][0]).toFixed(1);
    });
    make("polyline", {points: points.join(" "), fill: "none", stroke: "#1a1a1a", "stroke-width": "0.8",
                      "class": "trace"}, svg);
    var words = [];
    this.cursorLines().forEach(function (c) {
      if (c[0] < lo || c[0] > hi) { return; }
      make("line", {x1: self.px(c[0]), x2: self.px(c[0]), y1: T, y2: H - B, stroke: "#0a7d7d",
                    "stroke-width": "1.2", "class": "cursor"}, svg);
      make("text", {x: self.px(c[0]) + 2, y: T + 10, fill: "#0a7d7d", "font-size": "9.5", "class": "cursor"},
           svg).textContent = c[1];
      words.push(c[1] + " " + number(c[0]));
    });
    var c = this.cursor;
    this.readout.textContent = !c ? "" : (c.kind === "harmonic" ? "harmonic cursor, f = " + number(c.f) + " " + u
        : "sideband cursor, carrier " + number(c.f) + " " + u + ", spacing " + this.spacing.value + " " + u) +
        ": " + words.join(", ") + " " + u;
  };

  window.tellwavePlots = [];
  var figures = document.querySelectorAll("figure[data-plot]");
  for (var i = 0; i < figures.length; i++) {
    var source = document.getElementById(figures[i].getAttribute("data-plot"));
    if (source) { window.tellwavePlots.push(new Plot(figures[i], JSON.parse(source.textContent))); }
  }
})();
