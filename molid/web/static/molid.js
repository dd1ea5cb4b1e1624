// molid web page: drag and drop onto the file boxes, the upload-size check, progress of running tasks.
// Everything works without this script too (plain forms; the progress page then needs reloading).
(function () {
  "use strict";

  function showChosen(zone, input) {
    var place = zone.querySelector("[data-chosen]");
    if (!place) { return; }
    var names = Array.prototype.map.call(input.files || [], function (file) { return file.name; });
    place.textContent = names.length ? "Chosen: " + names.join(", ") : "";
  }

  document.querySelectorAll("[data-drop]").forEach(function (zone) {
    var input = zone.querySelector("input[type=file]");
    if (!input) { return; }
    ["dragenter", "dragover"].forEach(function (name) {
      zone.addEventListener(name, function (event) { event.preventDefault(); zone.classList.add("over"); });
    });
    ["dragleave", "drop"].forEach(function (name) {
      zone.addEventListener(name, function (event) { event.preventDefault(); zone.classList.remove("over"); });
    });
    zone.addEventListener("drop", function (event) {
      if (event.dataTransfer && event.dataTransfer.files.length) {
        input.files = event.dataTransfer.files;
        showChosen(zone, input);
      }
    });
    input.addEventListener("change", function () { showChosen(zone, input); });
  });

  var form = document.querySelector("form[data-limit]");
  if (form) {
    form.addEventListener("submit", function (event) {
      var limit = Number(form.getAttribute("data-limit"));
      var total = 0;
      form.querySelectorAll("input[type=file]").forEach(function (input) {
        Array.prototype.forEach.call(input.files || [], function (file) { total += file.size; });
      });
      if (limit && total > limit) {
        event.preventDefault();
        var box = document.getElementById("problem");
        document.getElementById("problem-text").textContent = "The files are larger than the upload limit of " +
          form.getAttribute("data-limit-text") + " (all files of one analysis together). Split the run sheet " +
          "into smaller files, or ask whoever started molid serve to raise the limit with --max-upload.";
        box.hidden = false;
        box.focus();
      }
    });
  }

  function poll(box) {
    var url = box.getAttribute("data-status-url");
    fetch(url, { credentials: "same-origin", cache: "no-store" })
      .then(function (response) { return response.json(); })
      .then(function (status) {
        if (["done", "failed", "cancelled"].indexOf(status.state) >= 0) { window.location.reload(); return; }
        var stage = box.querySelector("[data-stage]");
        var bar = box.querySelector("[data-bar]");
        var counts = box.querySelector("[data-counts]");
        if (status.state === "queued") {
          stage.textContent = "Waiting for a free worker (number " + status.position + " in the queue)";
        } else if (status.stage) {
          stage.textContent = status.stage.charAt(0).toUpperCase() + status.stage.slice(1) +
            " (" + status.seconds.toFixed(0) + " s)";
        }
        if (status.percent !== null && bar) { bar.value = status.percent; bar.textContent = status.percent + " %"; }
        if (status.total && counts) {
          counts.textContent = status.done.toLocaleString() + " of about " + status.total.toLocaleString() + " runs";
        }
        window.setTimeout(function () { poll(box); }, 1000);
      })
      .catch(function () { window.setTimeout(function () { poll(box); }, 3000); });
  }
  document.querySelectorAll("[data-status-url]").forEach(function (box) {
    window.setTimeout(function () { poll(box); }, 700);
  });
}());
