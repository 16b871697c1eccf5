/* The projector page: the altered pieces at 1:1 on the cutting mat.
 *
 * The scale is kept as CSS pixels per millimetre in this browser's localStorage.
 * It starts at the CSS reference (96 px to the inch, 25.4 mm to the inch: W3C CSS
 * Values and Units Level 3, 5.2), which a projector rarely shows true; the user
 * measures the drawn 10 cm square on the mat and enters what it measures, or
 * drags its corner until it measures 10 cm.  The pieces come from the server as
 * SVG with one user unit to the millimetre and are drawn at that scale.
 */
(function () {
  "use strict";
  var root = document.getElementById("projector");
  if (!root) { return; }

  var KEY = "atelier.projector.pxPerMm";
  var CSS_PX_PER_MM = 96 / 25.4;
  var SQUARE_MM = 100;
  var MIN_SCALE = 0.2, MAX_SCALE = 40;

  var square = document.getElementById("calibration-square");
  var handle = document.getElementById("calibration-handle");
  var scaleText = document.getElementById("scale-text");
  var measured = document.getElementById("measured");
  var measuredUnit = document.getElementById("measured-unit");
  var weight = document.getElementById("line-weight");
  var weightText = document.getElementById("line-weight-text");
  var mirror = document.getElementById("mirror");
  var rotation = document.getElementById("rotation");
  var projection = document.getElementById("projection");
  var frame = document.getElementById("projection-frame");
  var pieces = null;

  function stored() {
    var value = NaN;
    try { value = parseFloat(window.localStorage.getItem(KEY)); } catch (e) { value = NaN; }
    return isFinite(value) && value >= MIN_SCALE && value <= MAX_SCALE ? value : CSS_PX_PER_MM;
  }

  var scale = stored();

  function save() {
    try { window.localStorage.setItem(KEY, String(scale)); } catch (e) { /* private mode: kept for this visit only */ }
  }

  function setScale(value, keep) {
    scale = Math.min(MAX_SCALE, Math.max(MIN_SCALE, value));
    if (keep) { save(); }
    draw();
  }

  function say(text) { scaleText.textContent = text; }

  function drawSquare() {
    var side = SQUARE_MM * scale;
    square.style.width = side + "px";
    square.style.height = side + "px";
    square.dataset.pxPerMm = String(scale);
  }

  function mmOf(attribute) {
    var match = /^([0-9.]+)mm$/.exec(attribute || "");
    return match ? parseFloat(match[1]) : 0;
  }

  function drawPieces() {
    if (!pieces) { return; }
    var w = mmOf(pieces.getAttribute("width")) * scale;
    var h = mmOf(pieces.getAttribute("height")) * scale;
    var turn = parseInt(rotation.value, 10) || 0;
    pieces.style.width = w + "px";
    pieces.style.height = h + "px";
    var turned = turn === 90 || turn === 270;
    frame.style.width = (turned ? h : w) + "px";
    frame.style.height = (turned ? w : h) + "px";
    var move = { 0: "", 90: "translate(" + h + "px, 0) rotate(90deg)", 180: "translate(" + w + "px, " + h + "px) rotate(180deg)",
                 270: "translate(0, " + w + "px) rotate(270deg)" }[turn] || "";
    var flip = mirror.checked ? " translate(" + w + "px, 0) scale(-1, 1)" : "";
    pieces.style.transform = (move + flip).trim() || "none";
    var lineMm = parseFloat(weight.value) || 0.6;
    weightText.textContent = lineMm.toFixed(1) + " mm";
    var paths = pieces.querySelectorAll("path.cut, path.stitch, path.notch, path.grain, path.channel, circle.eyelet");
    for (var i = 0; i < paths.length; i += 1) {
      var thin = paths[i].classList.contains("stitch") || paths[i].classList.contains("channel");
      paths[i].setAttribute("stroke-width", String(thin ? 0.75 * lineMm : lineMm));
    }
  }

  function draw() {
    drawSquare();
    drawPieces();
    say("Scale: " + scale.toFixed(3) + " screen pixels to the millimetre" +
        (Math.abs(scale - CSS_PX_PER_MM) < 1e-9 ? " (not calibrated yet)." : "."));
  }

  document.getElementById("apply-measured").addEventListener("click", function () {
    var text = (measured.value || "").trim().replace(",", ".");
    var value = parseFloat(text);
    if (!/^[0-9]*\.?[0-9]+$/.test(text) || !(value > 0)) {
      say("Enter what the square measures, for example 12.5.");
      return;
    }
    var mm = value * (measuredUnit.value === "in" ? 25.4 : 10);
    setScale(scale * SQUARE_MM / mm, true);
    measured.value = "";
  });

  document.getElementById("reset-scale").addEventListener("click", function () {
    try { window.localStorage.removeItem(KEY); } catch (e) { /* nothing kept */ }
    scale = CSS_PX_PER_MM;
    draw();
  });

  var dragging = null;
  handle.addEventListener("pointerdown", function (event) {
    var box = square.getBoundingClientRect();
    dragging = { left: box.left, top: box.top };
    handle.setPointerCapture(event.pointerId);
    event.preventDefault();
  });
  handle.addEventListener("pointermove", function (event) {
    if (!dragging) { return; }
    var side = Math.max(event.clientX - dragging.left, event.clientY - dragging.top);
    setScale(side / SQUARE_MM, false);
  });
  function endDrag() {
    if (dragging) { dragging = null; save(); }
  }
  handle.addEventListener("pointerup", endDrag);
  handle.addEventListener("pointercancel", endDrag);

  weight.addEventListener("input", drawPieces);
  mirror.addEventListener("change", drawPieces);
  rotation.addEventListener("change", drawPieces);

  document.getElementById("show-square").addEventListener("click", function () {
    document.getElementById("calibration-area").hidden = false;
    projection.hidden = true;
  });
  document.getElementById("show-pieces").addEventListener("click", function () {
    projection.hidden = false;
    if (pieces) { return; }
    fetch(root.dataset.pieces, { credentials: "same-origin" })
      .then(function (response) {
        if (!response.ok) { throw new Error(String(response.status)); }
        return response.text();
      })
      .then(function (text) {
        var doc = new DOMParser().parseFromString(text, "image/svg+xml");
        pieces = document.importNode(doc.documentElement, true);
        frame.appendChild(pieces);
        drawPieces();
      })
      .catch(function (error) { say("The pieces could not be loaded (" + error.message + "). Reload the page."); });
  });

  draw();
}());
