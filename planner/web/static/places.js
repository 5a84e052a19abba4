// Suggests places from the server's offline gazetteer while a place's name is typed (GET /places?q=...).
(function () {
  "use strict";
  function attach(prefix) {
    var input = document.getElementById(prefix + "_place");
    var list = document.getElementById(prefix + "_choices");
    if (!input || !list) { return; }
    var timer = null;
    input.addEventListener("input", function () {
      window.clearTimeout(timer);
      timer = window.setTimeout(function () {
        var query = input.value.trim();
        if (query.length < 2) { return; }
        fetch("/places?q=" + encodeURIComponent(query), {credentials: "same-origin"})
          .then(function (answer) { return answer.json(); })
          .then(function (found) {
            while (list.firstChild) { list.removeChild(list.firstChild); }
            found.matches.forEach(function (match) {
              var option = document.createElement("option");
              option.value = match.write;
              option.textContent = match.describe;
              list.appendChild(option);
            });
          }).catch(function () { /* suggestions are a convenience; the form works without them */ });
      }, 250);
    });
  }
  attach("home");
  attach("destination");
}());
