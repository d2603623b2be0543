// layflow replay player: the plant drawn once, then per frame the movers on their paths,
// the lots waiting at each department and its machines by state. Plain JavaScript, no
// library; reads only #replay-data and the controls inside section#replay.
(function () {
  "use strict";
  var sec = document.getElementById("replay");
  var dataEl = document.getElementById("replay-data");
  if (!sec || !dataEl) { return; }
  var D = JSON.parse(dataEl.textContent);
  var canvas = document.getElementById("replay-canvas");
  var ctx = canvas.getContext("2d");
  var playBtn = document.getElementById("replay-play");
  var speedSel = document.getElementById("replay-speed");
  var slider = document.getElementById("replay-slider");
  var clockEl = document.getElementById("replay-clock");
  var C = D.colours, FONT = D.font, N = D.n, TPS = D.ticks_per_s;

  // ---- data, decoded once into typed arrays ----
  function cumul(a) {
    var out = new Float64Array(a.length), s = 0;
    for (var i = 0; i < a.length; i++) { s += a[i]; out[i] = s; }
    return out;
  }
  // Last index i with arr[i] <= x, or -1.
  function find(arr, x) {
    var lo = 0, hi = arr.length - 1, r = -1;
    while (lo <= hi) {
      var mid = (lo + hi) >> 1;
      if (arr[mid] <= x) { r = mid; lo = mid + 1; } else { hi = mid - 1; }
    }
    return r;
  }
  var paths = D.paths.map(function (p) {
    var n = p.length / 2, cum = new Float64Array(n);
    for (var i = 1; i < n; i++) {
      cum[i] = cum[i - 1] + Math.hypot(p[2 * i] - p[2 * i - 2], p[2 * i + 1] - p[2 * i - 1]);
    }
    return { xy: Float64Array.from(p), cum: cum, len: cum[n - 1] };
  });
  var movers = [];
  D.fleets.forEach(function (f, fi) {
    f.movers.forEach(function (m) {
      movers.push({
        fleet: fi, s: m.s, t: cumul(m.t), d: Float64Array.from(m.d), p: Int32Array.from(m.p),
        b0: m.b0, b: cumul(m.b), x: 0, y: 0, loaded: false
      });
    });
  });
  var queues = D.queues.map(function (q) { return { t: cumul(q.t), n: Int32Array.from(q.n) }; });
  var wip = { t: cumul(D.wip.t), n: Int32Array.from(D.wip.n) };
  var machines = D.machines.map(function (m) { return { t: cumul(m.t), c: Int32Array.from(m.c) }; });
  var NS = D.states.length;
  var stateColour = {
    busy: C.teal, setup: C.amber, blocked: C.blocked, down: C.brick, off_shift: C.off_shift, idle: C.idle
  };
  var stateFill = D.states.map(function (s) { return stateColour[s] || C.idle; });
  var fleetColour = D.fleets.map(function (_, i) { return C.fleets[i % C.fleets.length]; });

  // ---- geometry: plant metres to CSS pixels, y up in the plant ----
  var G = { scale: 1, x0: 0, y1: 0, ox: 0, oy: 0, w: 0, h: 0, dpr: 1, half: D.half };
  var stat = document.createElement("canvas");
  var locs = D.locs;
  function px(x) { return G.ox + (x - G.x0) * G.scale; }
  function py(y) { return G.oy + (G.y1 - y) * G.scale; }
  function layout() {
    var half = D.half, x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
    function take(x, y) {
      x0 = Math.min(x0, x - half); x1 = Math.max(x1, x + half);
      y0 = Math.min(y0, y - half); y1 = Math.max(y1, y + half);
    }
    for (var i = 0; i < locs.length; i += 2) { take(locs[i], locs[i + 1]); }
    if (D.aisles) { for (var j = 0; j < D.aisles.nodes.length; j += 2) { take(D.aisles.nodes[j], D.aisles.nodes[j + 1]); } }
    var pad = 24, top = 30;
    var w = Math.max(320, canvas.clientWidth || sec.clientWidth || 1000);
    var maxH = Math.max(360, (window.innerHeight || 900) * 0.78);
    var scale = Math.min((w - 2 * pad) / Math.max(1, x1 - x0), (maxH - pad - top) / Math.max(1, y1 - y0));
    var h = Math.round((y1 - y0) * scale + pad + top);
    G.scale = scale; G.x0 = x0; G.y1 = y1; G.w = w; G.h = h;
    G.ox = (w - (x1 - x0) * scale) / 2; G.oy = top;
    G.dpr = window.devicePixelRatio || 1;
    canvas.style.height = h + "px";
    canvas.width = Math.round(w * G.dpr); canvas.height = Math.round(h * G.dpr);
    stat.width = canvas.width; stat.height = canvas.height;
    drawStatic();
  }

  // Each department's box in CSS pixels, and where its parts go.
  var boxes = [];
  function boxOf(d) {
    var dept = D.depts[d], l = dept[1], role = dept[2];
    var hp = D.half * G.scale;
    var hw = role === "w" ? hp : hp * 0.45, hh = role === "w" ? hp : hp * 0.9;
    var cx = px(locs[2 * l]), cy = py(locs[2 * l + 1]);
    return { x: cx - hw, y: cy - hh, w: 2 * hw, h: 2 * hh, cx: cx, cy: cy, role: role, name: dept[0], machines: dept[3] };
  }
  function fitFont(text, width, max) {
    var size = Math.min(max, width / (0.62 * Math.max(4, text.length)));
    return Math.max(9, Math.floor(size));
  }

  function drawStatic() {
    var c = stat.getContext("2d");
    c.setTransform(1, 0, 0, 1, 0, 0);
    c.clearRect(0, 0, stat.width, stat.height);
    c.setTransform(G.dpr, 0, 0, G.dpr, 0, 0);
    c.fillStyle = "#fff"; c.fillRect(0, 0, G.w, G.h);
    // Aisles first, under everything.
    if (D.aisles) {
      var nd = D.aisles.nodes, sg = D.aisles.segs;
      c.strokeStyle = C.aisle; c.lineCap = "round";
      c.lineWidth = Math.max(3, Math.min(12, 1.6 * G.scale));
      c.beginPath();
      for (var s = 0; s < sg.length; s += 2) {
        c.moveTo(px(nd[2 * sg[s]]), py(nd[2 * sg[s] + 1]));
        c.lineTo(px(nd[2 * sg[s + 1]]), py(nd[2 * sg[s + 1] + 1]));
      }
      c.stroke();
      // The stub from each department's pick-up point to its node on the aisles.
      c.setLineDash([2, 3]); c.lineWidth = 1.2; c.strokeStyle = C.slate; c.beginPath();
      D.depts.forEach(function (d) {
        var l = d[1], n = D.aisles.loc_node[l];
        c.moveTo(px(locs[2 * l]), py(locs[2 * l + 1]));
        c.lineTo(px(nd[2 * n]), py(nd[2 * n + 1]));
      });
      c.stroke(); c.setLineDash([]);
    }
    // Empty locations: dashed outlines.
    var held = new Array(locs.length / 2).fill(false);
    D.depts.forEach(function (d) { held[d[1]] = true; });
    var hp = D.half * G.scale;
    c.setLineDash([4, 3]); c.strokeStyle = C.empty_loc; c.lineWidth = 1.2;
    c.textAlign = "center"; c.fillStyle = C.empty_loc;
    c.font = Math.max(10, Math.min(13, hp / 5)) + "px " + FONT;
    for (var l = 0; l < held.length; l++) {
      if (!held[l]) {
        // An empty location keeps its name: an overflow yard or a parking spot is one.
        c.strokeRect(px(locs[2 * l]) - hp, py(locs[2 * l + 1]) - hp, 2 * hp, 2 * hp);
        c.fillText(D.loc_names[l], px(locs[2 * l]), py(locs[2 * l + 1]) - hp + Math.max(14, Math.min(20, hp / 4)));
      }
    }
    c.setLineDash([]);
    boxes = D.depts.map(function (_, d) { return boxOf(d); });
    // One size for every department's name, the largest that fits the longest (at least 11 px).
    var nameSize = 16;
    boxes.forEach(function (b) { if (b.role === "w") { nameSize = Math.min(nameSize, fitFont(b.name, b.w - 8, 16)); } });
    nameSize = Math.max(11, nameSize);
    boxes.forEach(function (b) {
      c.fillStyle = b.role === "w" ? C.dept_fill : C.dock_fill;
      c.strokeStyle = C.slate; c.lineWidth = 1.4;
      roundRect(c, b.x, b.y, b.w, b.h, 4); c.fill(); c.stroke();
      c.fillStyle = C.slate; c.textAlign = "center"; c.textBaseline = "alphabetic";
      if (b.role === "w") {
        var size = nameSize;
        b.font = size;
        c.font = "bold " + size + "px " + FONT;
        c.fillText(b.name, b.cx, b.y + size + 5);
      } else {
        // A dock's box is narrow: its name goes above it.
        c.font = "bold 13px " + FONT;
        c.fillText(b.name, b.cx, b.y - 6);
        b.font = 13;
      }
    });
    // The plant's name, top left, where the totals (top right) leave room for it.
    var title = D.plant + " \u2014 layout " + D.layout + ", replication " + D.replication;
    c.font = "bold 13px " + FONT;
    var room = G.w - 30 - c.measureText("9999 lots in the plant \u00b7 9999 waiting for a machine").width;
    c.font = "12px " + FONT;
    if (c.measureText(title).width <= room) {
      c.textAlign = "left"; c.fillStyle = C.slate;
      c.fillText(title, 8, 16);
    }
  }
  function roundRect(c, x, y, w, h, r) {
    c.beginPath();
    c.moveTo(x + r, y); c.lineTo(x + w - r, y); c.quadraticCurveTo(x + w, y, x + w, y + r);
    c.lineTo(x + w, y + h - r); c.quadraticCurveTo(x + w, y + h, x + w - r, y + h);
    c.lineTo(x + r, y + h); c.quadraticCurveTo(x, y + h, x, y + h - r);
    c.lineTo(x, y + r); c.quadraticCurveTo(x, y, x + r, y); c.closePath();
  }

  // ---- one frame ----
  var now = 0; // ticks from the window's start
  function pointAt(path, f, m) {
    var target = f * path.len, cum = path.cum, xy = path.xy, i = find(cum, target);
    if (i >= cum.length - 1) { m.x = xy[xy.length - 2]; m.y = xy[xy.length - 1]; return; }
    if (i < 0) { i = 0; }
    var seg = cum[i + 1] - cum[i], u = seg > 0 ? (target - cum[i]) / seg : 0;
    m.x = xy[2 * i] + (xy[2 * i + 2] - xy[2 * i]) * u;
    m.y = xy[2 * i + 1] + (xy[2 * i + 3] - xy[2 * i + 1]) * u;
  }
  function place(m) {
    var i = find(m.t, now);
    if (i < 0) { m.x = locs[2 * m.s]; m.y = locs[2 * m.s + 1]; }
    else {
      var d = m.d[i], f = d > 0 ? Math.min(1, (now - m.t[i]) / d) : 1;
      pointAt(paths[m.p[i] >> 1], f, m);
    }
    var k = find(m.b, now);
    m.loaded = ((k + 1) % 2 === 0) ? !!m.b0 : !m.b0;
  }

  function draw() {
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.drawImage(stat, 0, 0);
    ctx.setTransform(G.dpr, 0, 0, G.dpr, 0, 0);
    var i, b;
    for (i = 0; i < boxes.length; i++) {
      b = boxes[i];
      if (b.role !== "w") { continue; }
      drawMachines(b, machines[i]);
      drawQueue(b, queues[i]);
    }
    drawTotals();
    var r = Math.max(4, Math.min(8, D.half * G.scale * 0.09));
    for (i = 0; i < movers.length; i++) {
      var m = movers[i];
      place(m);
      // A small fixed offset per mover, so movers at one spot stay apart.
      var a = i * 2.399, off = i === 0 ? 0 : r * 1.5;
      var x = px(m.x) + Math.cos(a) * off, y = py(m.y) + Math.sin(a) * off;
      ctx.beginPath(); ctx.arc(x, y, r, 0, 6.2832);
      // A white halo keeps the mark readable over a box or an aisle.
      ctx.lineWidth = 5; ctx.strokeStyle = "#fff"; ctx.stroke();
      ctx.fillStyle = m.loaded ? fleetColour[m.fleet] : "#fff";
      ctx.fill();
      ctx.lineWidth = 2.2; ctx.strokeStyle = fleetColour[m.fleet]; ctx.stroke();
    }
  }
  // The plant at a glance, top right: lots in the plant, and how many wait for a machine.
  function drawTotals() {
    var j = find(wip.t, now), inPlant = j >= 0 ? wip.n[j] : 0, waiting = 0;
    for (var i = 0; i < queues.length; i++) {
      var k = find(queues[i].t, now);
      if (k >= 0) { waiting += queues[i].n[k]; }
    }
    ctx.textAlign = "right"; ctx.fillStyle = C.slate;
    ctx.font = "bold 13px " + FONT;
    ctx.fillText(inPlant + " lots in the plant · " + waiting + " waiting for a machine", G.w - 10, 17);
  }

  // A department box from the top: its name, the lots waiting (a count and a stack of
  // small squares growing up from the machines), and a row of squares, one per machine,
  // coloured by state.
  function machineSize(b) {
    var n = Math.max(1, b.machines), gap = 3;
    return Math.max(5, Math.min(26, b.w / 5.5, (b.w - 16 - gap * (n - 1)) / n));
  }
  function drawMachines(b, mc) {
    var n = b.machines;
    if (n <= 0) { return; }
    var j = find(mc.t, now);
    var gap = 3, size = machineSize(b);
    var total = n * size + (n - 1) * gap, x = b.cx - total / 2, y = b.y + b.h - size - 8;
    var drawn = 0;
    for (var s = 0; s < NS && j >= 0; s++) {
      var k = mc.c[j * NS + s];
      ctx.fillStyle = stateFill[s];
      for (var q = 0; q < k && drawn < n; q++, drawn++) { ctx.fillRect(x + drawn * (size + gap), y, size, size); }
    }
    ctx.strokeStyle = C.slate; ctx.lineWidth = 1;
    for (var e = 0; e < n; e++) { ctx.strokeRect(x + e * (size + gap) + 0.5, y + 0.5, size - 1, size - 1); }
  }
  function drawQueue(b, q) {
    var j = find(q.t, now), count = j >= 0 ? q.n[j] : 0;
    var textSize = Math.max(10, Math.min(14, b.w / 10));
    var textY = b.y + b.font + 8 + textSize;
    ctx.textAlign = "center";
    if (count === 0) {
      ctx.fillStyle = C.empty_loc; ctx.font = textSize + "px " + FONT;
      ctx.fillText("no queue", b.cx, textY);
      return;
    }
    ctx.fillStyle = C.slate; ctx.font = "bold " + textSize + "px " + FONT;
    ctx.fillText(count + " waiting", b.cx, textY);
    var size = Math.max(4, Math.min(11, b.w / 14)), gap = 2;
    var perRow = Math.max(1, Math.min(10, Math.floor((b.w - 16 + gap) / (size + gap))));
    var bottom = b.y + b.h - machineSize(b) - 16;
    var rows = Math.max(1, Math.floor((bottom - textY - 4) / (size + gap)));
    var shown = Math.min(count, rows * perRow);
    var cols = Math.min(shown, perRow), x0 = b.cx - (cols * (size + gap) - gap) / 2;
    ctx.fillStyle = C.queue;
    for (var i = 0; i < shown; i++) {
      var row = Math.floor(i / perRow), col = i % perRow;
      ctx.fillRect(x0 + col * (size + gap), bottom - (row + 1) * (size + gap) + gap, size, size);
    }
  }

  // ---- the clock and the controls ----
  var lastMinute = -1;
  function clock() {
    var t = D.from + now / TPS, minute = Math.floor(t / 60);
    if (minute === lastMinute) { return; }
    lastMinute = minute;
    var day = Math.floor(t / 86400) + 1, mm = minute - (day - 1) * 1440;
    var hh = Math.floor(mm / 60), mi = mm % 60;
    clockEl.textContent = "day " + day + " " + (hh < 10 ? "0" : "") + hh + ":" + (mi < 10 ? "0" : "") + mi;
  }

  // Frame statistics: draw time per frame and the interval between frames.
  var RING = 240, drawMs = new Float64Array(RING), sorted = new Float64Array(RING);
  var frames = 0, drawSum = 0, intervalSum = 0, intervals = 0, lastTs = -1;
  function publish() {
    var n = Math.min(frames, RING);
    sorted.set(drawMs); var view = sorted.subarray(0, n); view.sort();
    var p95 = n > 0 ? view[Math.min(n - 1, Math.floor(0.95 * n))] : 0;
    sec.dataset.frames = String(frames);
    sec.dataset.frameMsMean = (frames > 0 ? drawSum / frames : 0).toFixed(3);
    sec.dataset.frameMsP95 = p95.toFixed(3);
    sec.dataset.intervalMsMean = (intervals > 0 ? intervalSum / intervals : 0).toFixed(3);
  }

  var playing = false;
  function step(ts) {
    if (!playing) { return; }
    if (lastTs >= 0) {
      var dt = ts - lastTs;
      intervalSum += dt; intervals++;
      now = Math.min(N, now + dt / 1000 * Number(speedSel.value) * TPS);
    }
    lastTs = ts;
    var t0 = performance.now();
    draw();
    var ms = performance.now() - t0;
    drawMs[frames % RING] = ms; drawSum += ms; frames++;
    slider.value = String(Math.round(now));
    clock();
    if (frames % 30 === 0) { publish(); }
    if (now >= N) { setPlaying(false); return; }
    window.requestAnimationFrame(step);
  }
  function setPlaying(on) {
    playing = on;
    playBtn.textContent = on ? "Pause" : "Play";
    if (on) {
      if (now >= N) { now = 0; }
      lastTs = -1;
      window.requestAnimationFrame(step);
    } else {
      publish();
    }
  }
  playBtn.addEventListener("click", function () { setPlaying(!playing); });
  slider.addEventListener("input", function () {
    now = Number(slider.value);
    if (!playing) { draw(); }
    clock();
  });
  var resizeTimer = 0;
  window.addEventListener("resize", function () {
    window.clearTimeout(resizeTimer);
    resizeTimer = window.setTimeout(function () { layout(); draw(); }, 100);
  });

  layout();
  draw();
  clock();
  sec.dataset.ready = "1";
})();
