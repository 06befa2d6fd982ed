#!/usr/bin/env bash
# Opens a rendered report.html in headless Chromium and fails if any inline
# <svg> has zero width or height; also saves a screenshot next to it.
#
# Then it lays the page out as it prints: the body narrowed to the text
# block of a single-column A4 page with 2.5 cm margins (16 cm, the width the
# figures are designed for), and fails if a figure is wider than that block
# or any text inside a figure renders smaller than 8 pt (MIN_PT).
#
# Usage: tests/browser/check_svgs.sh path/to/report.html [screenshot.png]
#
# The report itself contains no scripts. A temporary copy gets one small
# measuring script appended; Chromium runs it and --dump-dom prints the
# result, which this script reads back. Exits 0 with "skipped: chromium not
# installed" when Chromium is absent.
set -euo pipefail

report="${1:?usage: check_svgs.sh report.html [screenshot.png]}"
shot="${2:-${report%.html}.png}"
chromium="${CHROMIUM:-/usr/bin/chromium}"

if [[ ! -x "$chromium" ]]; then
    echo "skipped: chromium not installed"
    exit 0
fi
if [[ ! -f "$report" ]]; then
    echo "error: no such file: $report" >&2
    exit 1
fi

work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
copy="$work/measure.html"
cp "$report" "$copy"
cat >>"$copy" <<'JS'
<script>
(function () {
  var out = [];
  var svgs = document.querySelectorAll("svg");
  for (var i = 0; i < svgs.length; i++) {
    var r = svgs[i].getBoundingClientRect();
    var t = svgs[i].querySelector("title");
    out.push((t ? t.textContent : "svg " + i) + "\t" + r.width + "\t" + r.height);
  }
  // The printed layout: the text block of an A4 page with 2.5 cm margins.
  document.body.style.maxWidth = "16cm";
  document.body.style.padding = "0";
  document.body.style.margin = "0";
  var block = document.body.clientWidth;
  for (var j = 0; j < svgs.length; j++) {
    var s = svgs[j];
    var rect = s.getBoundingClientRect();
    var vb = s.viewBox && s.viewBox.baseVal;
    var scale = vb && vb.width ? rect.width / vb.width : 1;
    var smallest = Infinity;
    var texts = s.querySelectorAll("text");
    for (var k = 0; k < texts.length; k++) {
      if (!texts[k].textContent.trim()) continue;
      var size = parseFloat(window.getComputedStyle(texts[k]).fontSize);
      // CSS pixels are 1/96 in, points 1/72 in.
      smallest = Math.min(smallest, size * scale * 0.75);
    }
    var tt = s.querySelector("title");
    out.push("print\t" + (tt ? tt.textContent : "svg " + j) + "\t" + rect.width + "\t" + block + "\t" + smallest);
  }
  var pre = document.createElement("pre");
  pre.id = "svg-measurements";
    // The markers are assembled at run time so that the script's own source,
  // which --dump-dom also prints, never contains them.
  pre.textContent = "BEGIN" + "-SVG\n" + svgs.length + "\n" + out.join("\n") + "\nEND" + "-SVG";
  document.body.appendChild(pre);
})();
</script>
JS

flags=(--headless --no-sandbox --disable-gpu --no-first-run
       --disable-background-networking --disable-component-update --disable-sync
       --run-all-compositor-stages-before-draw
       --virtual-time-budget=5000 --window-size=1000,1400)

dom="$("$chromium" "${flags[@]}" --user-data-dir="$(mktemp -d -p "$work")" --dump-dom "file://$copy" 2>"$work/stderr" || true)"
block="$(printf '%s\n' "$dom" | sed -n '/BEGIN-SVG/,/END-SVG/p' | sed '1d;$d')"
if [[ -z "$block" ]]; then
    echo "error: chromium produced no measurements" >&2
    tail -n 20 "$work/stderr" >&2 || true
    exit 1
fi
count="$(printf '%s\n' "$block" | head -n 1)"
bad=0
MIN_PT=8
while IFS=$'\t' read -r -a f; do
    [[ ${#f[@]} -eq 0 || -z "${f[0]}" ]] && continue
    if [[ "${f[0]}" == "print" ]]; then
        # print, figure, its width, the text block's width, smallest text (pt)
        if awk -v w="${f[2]}" -v b="${f[3]}" 'BEGIN { exit !(w <= b + 0.5) }'; then
            echo "ok: ${f[1]} fits the 16 cm text block (${f[2]} <= ${f[3]} px)"
        else
            echo "FAIL: ${f[1]} is ${f[2]} px wide, wider than the text block (${f[3]} px)"
            bad=1
        fi
        if awk -v p="${f[4]}" -v m="$MIN_PT" 'BEGIN { exit !(p >= m) }'; then
            echo "ok: ${f[1]} smallest text ${f[4]} pt >= ${MIN_PT} pt"
        else
            echo "FAIL: ${f[1]} has text of ${f[4]} pt, below ${MIN_PT} pt"
            bad=1
        fi
        continue
    fi
    name="${f[0]}" width="${f[1]:-0}" height="${f[2]:-0}"
    if awk -v w="$width" -v h="$height" 'BEGIN { exit !(w > 0 && h > 0) }'; then
        echo "ok: $name (${width} x ${height})"
    else
        echo "FAIL: $name has size ${width} x ${height}"
        bad=1
    fi
done < <(printf '%s\n' "$block" | tail -n +2)

if [[ "$count" == "0" ]]; then
    echo "FAIL: the report has no inline SVG figures"
    bad=1
fi

"$chromium" "${flags[@]}" --user-data-dir="$(mktemp -d -p "$work")" --screenshot="$shot" "file://$(realpath "$report")" 2>>"$work/stderr" >/dev/null || true
if [[ -s "$shot" ]]; then
    echo "screenshot: $shot"
else
    echo "FAIL: no screenshot written"
    bad=1
fi
exit "$bad"
