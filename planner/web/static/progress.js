// Polls a planning job and moves on to the plan when it is ready (no other script on the pages).
(function () {
  "use strict";
  var box = document.getElementById("job");
  if (!box) { return; }
  var url = box.getAttribute("data-status");
  function poll() {
    fetch(url, {credentials: "same-origin"}).then(function (answer) { return answer.json(); }).then(function (job) {
      document.getElementById("step").textContent = job.step;
      var bar = document.getElementById("bar");
      if (job.total) {
        bar.max = job.total; bar.value = job.done;
        document.getElementById("count").textContent = job.done + " of " + job.total;
      }
      if (job.state === "done" || job.state === "failed") { window.location.reload(); return; }
      window.setTimeout(poll, 700);
    }).catch(function () { window.setTimeout(poll, 2000); });
  }
  window.setTimeout(poll, 400);
}());
