// check.js runs inside a rendered morsel page (package pagecheck adds it
// at the end of the body) and lists, in a pre element with the id check-html,
// every place where text does not stay in its box: an element whose
// content is wider than the element (unless the element scrolls on
// purpose), a figure, name or piece of code that wraps onto a second
// line, SVG labels that overlap each other or leave their chart, and a
// heading that repeats the one above it.
(function () {
  var problems = [];
  function where(el) {
    var s = el.tagName.toLowerCase();
    if (el.id) s += "#" + el.id;
    if (el.className && typeof el.className === "string") s += "." + el.className.trim().split(/\s+/).join(".");
    var t = (el.textContent || "").trim().replace(/\s+/g, " ");
    if (t.length > 50) t = t.slice(0, 24) + "…" + t.slice(-24);
    return s + " \"" + t + "\"";
  }
  function lines(el) {
    var r = document.createRange();
    r.selectNodeContents(el);
    var tops = {};
    var rects = r.getClientRects();
    for (var i = 0; i < rects.length; i++) {
      if (rects[i].width > 0) tops[Math.round(rects[i].top)] = true;
    }
    return Object.keys(tops).length;
  }
  var all = document.body.getElementsByTagName("*");
  for (var i = 0; i < all.length; i++) {
    var el = all[i];
    if (el.id === "check-html" || el.closest("svg")) continue;
    var cs = getComputedStyle(el);
    if (cs.display === "inline" || cs.display === "none") continue;
    var scrolls = /auto|scroll/.test(cs.overflowX);
    if (!scrolls && el.clientWidth > 0 && el.scrollWidth > el.clientWidth + 1) {
      problems.push("overflows its box by " + (el.scrollWidth - el.clientWidth) + "px: " + where(el));
    }
    // Figures, names and code must read on one line; prose may wrap.
    if (el.matches("td.num, .v, .src, code, dd, .nowrap") && el.children.length === 0 && lines(el) > 1) {
      problems.push("wraps onto " + lines(el) + " lines: " + where(el));
    }
  }
  var svgs = document.getElementsByTagName("svg");
  for (var s = 0; s < svgs.length; s++) {
    var box = svgs[s].getBoundingClientRect();
    var texts = svgs[s].getElementsByTagName("text");
    var rects = [];
    for (var k = 0; k < texts.length; k++) {
      var r = texts[k].getBoundingClientRect();
      if (r.width === 0) continue;
      if (r.left < box.left - 1 || r.right > box.right + 1 || r.top < box.top - 1 || r.bottom > box.bottom + 1) {
        problems.push("leaves its chart: svg text \"" + texts[k].textContent + "\"");
      }
      for (var m = 0; m < rects.length; m++) {
        var o = rects[m].r;
        var dx = Math.min(r.right, o.right) - Math.max(r.left, o.left);
        var dy = Math.min(r.bottom, o.bottom) - Math.max(r.top, o.top);
        if (dx > 1 && dy > 1) {
          problems.push("svg labels collide: \"" + rects[m].t + "\" and \"" + texts[k].textContent + "\"");
        }
      }
      rects.push({ r: r, t: texts[k].textContent });
    }
  }
  var heads = document.querySelectorAll("h1, h2, h3, h4, caption, svg .ctitle");
  for (var h = 1; h < heads.length; h++) {
    var a = heads[h - 1].textContent.trim(), b = heads[h].textContent.trim();
    if (a !== "" && a === b) problems.push("heading repeated: \"" + b + "\"");
  }
  var pre = document.createElement("pre");
  pre.id = "check-html";
  pre.textContent = problems.length + " problem(s)\n" + problems.join("\n");
  document.body.appendChild(pre);
})();
