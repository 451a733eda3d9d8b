// mistara proofreading view: pairs each word box with its word in the text, moves between flagged
// words with n/j (next) and p/k (previous), and opens at flagged word N when the address ends in
// #flag=N. After every selection the body records what is selected and whether its box is on
// screen (data-selected, data-flag, data-box-in-view, data-scroll-y), for tests and bookmarks.
(function () {
  "use strict";
  var body = document.body;
  var flags = Array.prototype.slice.call(document.querySelectorAll(".text .w.flag"));
  document.getElementById("n-pages").textContent = document.querySelectorAll("section.page").length;
  document.getElementById("n-flags").textContent = flags.length;
  var current = -1;

  function inView(el) {
    var r = el.getBoundingClientRect();
    return r.bottom > 0 && r.top < window.innerHeight && r.right > 0 && r.left < window.innerWidth;
  }

  function select(key) {
    var box = document.getElementById("b" + key);
    var word = document.getElementById("t" + key);
    if (!box || !word) { return; }
    Array.prototype.forEach.call(document.querySelectorAll(".sel"), function (el) {
      el.classList.remove("sel");
    });
    box.classList.add("sel");
    word.classList.add("sel");
    current = flags.indexOf(word);
    // The text column scrolls by itself; bring the word into it first, then the box to the middle.
    var column = word.closest(".text");
    column.scrollTop = word.offsetTop - column.clientHeight / 2;
    box.scrollIntoView({ block: "center", inline: "nearest", behavior: "instant" });
    var page = key.split("-")[0];
    document.getElementById("where").textContent = current >= 0
      ? "flagged word " + (current + 1) + " of " + flags.length + ", page " + page
      : "word on page " + page;
    body.dataset.selected = key;
    body.dataset.flag = current + 1;
    body.dataset.boxInView = inView(box) ? "1" : "0";
    body.dataset.scrollY = Math.round(window.scrollY);
  }

  function step(by) {
    if (flags.length === 0) { return; }
    var next = current < 0 ? (by > 0 ? 0 : flags.length - 1)
      : (current + by + flags.length) % flags.length;
    select(flags[next].dataset.w);
  }

  document.addEventListener("click", function (e) {
    var el = e.target.closest("[data-w]");
    if (el) { select(el.dataset.w); }
  });
  document.addEventListener("keydown", function (e) {
    if (e.ctrlKey || e.metaKey || e.altKey) { return; }
    if (e.key === "n" || e.key === "j") { step(1); e.preventDefault(); }
    if (e.key === "p" || e.key === "k") { step(-1); e.preventDefault(); }
  });
  window.addEventListener("load", function () {
    var m = /flag=(\d+)/.exec(window.location.hash);
    if (m && flags[Number(m[1]) - 1]) { flags[Number(m[1]) - 1].click(); }
    body.dataset.ready = "1";
  });
})();
