"""pleat report's pages in a real browser: Debian's chromium, headless, driven by
python3-selenium through chromium-driver (no browser download).

Checks, on pages pleat writes for data/fold2d.json (2 inputs), data/ramp1d.json
(1 input), data/sensor3d.json (a 2-D slice of 3 inputs) and a small survey:
- each page loads with no console message at warning level or worse and makes
  no network request (the browser's own performance log lists every request;
  only the page's file itself may appear);
- pointing at a region's exact interior point (mapped to pixels by the page's
  own transform) shows its pattern, and that pattern is what `pleat inspect
  --at` (exact, independent of the page) says at that point; for the slice,
  at the point with the held coordinate put back;
- unticking a layer hides exactly that layer's lines, and each line of layer 1
  lies on a first-layer neuron's hyperplane (checked from the network's
  weights, not from the page);
- the pattern search finds a region, and a wildcard search finds as many as
  fnmatch over the embedded patterns;
- the survey page's bars have the counts of the survey file, and pointing at
  a bar lists that value's samples;
- screenshots are written under the build directory, for a person to look at
  (not compared).
Run as: report_browser_test.py PLEAT_BINARY SOURCE_DIR. Without chromium it
skips (exit 77), except in CI (CI=true), where it must run.
"""
import fnmatch
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from fractions import Fraction

pleat, source = sys.argv[1], sys.argv[2]
build = os.path.dirname(os.path.dirname(os.path.abspath(pleat)))
shots = os.path.join(build, "report-screenshots")
in_ci = os.environ.get("CI") == "true"


def skip_or_fail(message):
    if in_ci:
        print("FAIL (CI=true, the browser test must run): " + message)
        sys.exit(1)
    print("SKIP: " + message)
    sys.exit(77)


chromium = shutil.which("chromium") or "/usr/bin/chromium"
driver_path = shutil.which("chromedriver") or "/usr/bin/chromedriver"
if not os.path.exists(chromium) or not os.path.exists(driver_path):
    skip_or_fail("Debian's chromium and chromium-driver are not installed (scripts/install-deps.sh installs them)")
try:
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service
    from selenium.webdriver.common.action_chains import ActionChains
    from selenium.webdriver.common.actions.action_builder import ActionBuilder
    from selenium.webdriver.common.by import By
    from selenium.webdriver.common.keys import Keys
except ImportError:
    skip_or_fail("python3-selenium is not installed (scripts/install-deps.sh installs it)")

failures = []


def check(condition, message):
    if not condition:
        failures.append(message)
        print("FAIL: " + message)


def run(*arguments):
    return subprocess.run([pleat, *arguments], check=True, capture_output=True, text=True).stdout


def embedded(path):
    text = open(path, encoding="utf-8").read()
    match = re.search(r'<script type="application/json" id="pleat-data">(.*?)</script>', text, re.S)
    return json.loads(match.group(1).replace("<\\/", "</"))


def browser():
    options = webdriver.ChromeOptions()
    options.binary_location = chromium
    for argument in ["--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                     "--window-size=1400,1800", "--no-first-run", "--no-default-browser-check"]:
        options.add_argument(argument)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL", "performance": "ALL"})
    return webdriver.Chrome(service=Service(driver_path), options=options)


def open_page(driver, path):
    driver.get_log("performance")  # drop what came before
    url = "file://" + path
    driver.get(url)
    for _ in range(100):
        if driver.execute_script("return document.documentElement.getAttribute('data-ready')") == "true":
            break
        time.sleep(0.05)
    check(driver.execute_script("return document.documentElement.getAttribute('data-ready')") == "true",
          path + ": the page's script did not finish")
    return url


def check_quiet(driver, path, url):
    for entry in driver.get_log("browser"):
        if entry["level"] in ("WARNING", "SEVERE"):
            check(False, "%s: console %s: %s" % (path, entry["level"], entry["message"]))
    requests = []
    for entry in driver.get_log("performance"):
        message = json.loads(entry["message"])["message"]
        if message["method"] == "Network.requestWillBeSent":
            requests.append(message["params"]["request"]["url"])
    others = [r for r in requests if r != url and not r.startswith("data:")]
    check(not others, "%s: requests besides the page itself: %s" % (path, others))


def hover(driver, x, y):
    point = driver.execute_script("return pleatReport.toClient(arguments[0], arguments[1])", x, y)
    actions = ActionBuilder(driver)
    actions.pointer_action.move_to_location(int(round(point["x"])), int(round(point["y"])))
    actions.perform()
    time.sleep(0.05)
    return driver.find_element(By.ID, "detail-pattern").text if driver.find_elements(By.ID, "detail-pattern") else ""


def inspect_patterns(network, at, *domain):
    """Every region whose closure holds the point, by pleat inspect --at (exact)."""
    out = json.loads(run("inspect", network, "--at", at, *domain, "--json"))
    return [record["pattern"] for record in out["regions"]]


def widest(regions, count):
    """Regions whose interior point sits well inside: the largest areas (or lengths)."""
    key = "area_double" if "area_double" in regions[0] else "length_double"
    return sorted(regions, key=lambda r: -r[key])[:count]


work = tempfile.mkdtemp(prefix="pleat-browser-")
# Chromium puts its singleton socket directories (org.chromium.Chromium.*) in
# TMPDIR and leaves them behind: in the work directory they go with it.
os.environ["TMPDIR"] = work
os.makedirs(shots, exist_ok=True)
started = time.time()
fold = os.path.join(source, "data", "fold2d.json")
ramp = os.path.join(source, "data", "ramp1d.json")
sensor = os.path.join(source, "data", "sensor3d.json")
plane_page = os.path.join(work, "fold2d.html")
line_page = os.path.join(work, "ramp1d.html")
slice_page = os.path.join(work, "sensor3d.html")
survey_page = os.path.join(work, "survey.html")
survey_file = os.path.join(work, "survey.jsonl")
run("report", fold, "--box", "-3,3", "-o", plane_page, "-q")
run("report", ramp, "--box", "-2,3", "-o", line_page, "-q")
run("report", sensor, "--box", "-1,1", "--slice", "x3=-1/2,1/4", "-o", slice_page, "-q")
run("survey", "--arch", "2,3,3,1", "--samples", "12", "--seed", "3", "-o", survey_file, "-q")
run("report", survey_file, "-o", survey_page)

try:
    driver = browser()
except Exception as error:  # a broken browser install: say what it was
    skip_or_fail("chromium did not start: %s" % error)

try:
    # ---- 2 inputs -------------------------------------------------------------
    url = open_page(driver, plane_page)
    data = embedded(plane_page)
    regions = data["map"]["regions"]
    for region in widest(regions, 4):
        shown = hover(driver, *region["point_double"])
        check(shown == region["pattern"], "fold2d: pointing at region %d shows %r, not %r" % (region["id"], shown, region["pattern"]))
        exact = inspect_patterns(fold, ",".join(region["point"]), "--box", "-3,3")
        check(exact == [shown], "fold2d: the page shows %r at %s, pleat inspect --at says %s" % (shown, region["point"], exact))
    # Layer toggle: exactly layer 1's lines go.
    layers = len(data["network"]["layers"])
    def displayed(layer):
        return [p.is_displayed() for p in driver.find_elements(By.CSS_SELECTOR, "#layer-%d path" % layer)]
    before = {k: displayed(k) for k in range(1, layers + 1)}
    check(all(all(v) for v in before.values()) and all(before.values()), "fold2d: every line is visible at first")
    driver.find_element(By.ID, "toggle-layer-1").click()
    check(not any(displayed(1)), "fold2d: unticking layer 1 left some of its lines visible")
    for k in range(2, layers + 1):
        check(all(displayed(k)) and len(displayed(k)) == len(before[k]), "fold2d: unticking layer 1 hid lines of layer %d" % k)
    driver.find_element(By.ID, "toggle-layer-1").click()
    check(all(displayed(1)), "fold2d: ticking layer 1 again did not show its lines")
    # Each layer-1 line lies on a first-layer neuron's line w.x + b = 0 (the network's own weights).
    network = json.load(open(fold))
    first = network["layers"][0]
    weights = [[Fraction(str(w)) for w in row] for row in first["weights"]]
    bias = [Fraction(str(b)) for b in first["bias"]]
    layer_one = [line for line in data["map"]["lines"] if line["layer"] == 0]
    check(len(layer_one) == len(before[1]), "fold2d: layer 1 group holds %d paths, data %d" % (len(before[1]), len(layer_one)))
    for line in layer_one:
        for neuron in line["neurons"]:
            check(neuron < len(bias), "fold2d: a layer-1 line names neuron %d" % neuron)
            if neuron < len(bias):
                w, b = weights[neuron], bias[neuron]
                scale = float(abs(w[0]) + abs(w[1]))
                for end in (line["from"], line["to"]):
                    residual = abs(float(w[0]) * end[0] + float(w[1]) * end[1] + float(b)) / scale
                    check(residual < 1e-6, "fold2d: layer-1 line of neuron %d is off its hyperplane by %g" % (neuron, residual))
    # Neuron highlight: clicking neuron 0 marks exactly the paths naming it.
    driver.find_element(By.CSS_SELECTOR, "#neuron-list button[data-neuron='0']").click()
    marked = driver.execute_script("return Array.from(document.querySelectorAll('path.bent.hl')).map(p => p.getAttribute('data-neurons'))")
    check(marked and all(" 0 " in m for m in marked), "fold2d: neuron 0's highlight marked %s" % marked)
    check(len(marked) == sum(1 for line in data["map"]["lines"] if 0 in line["neurons"]), "fold2d: neuron 0 highlight count")
    # Search: one exact pattern, then a wildcard.
    target = regions[len(regions) // 2]["pattern"]
    box = driver.find_element(By.ID, "pattern-search")
    box.clear()
    box.send_keys(target.replace("|", "/") + Keys.ENTER)
    time.sleep(0.05)
    check(driver.find_element(By.ID, "search-status").text == "1 region", "fold2d: search for %s: %r" % (target, driver.find_element(By.ID, "search-status").text))
    check(driver.find_element(By.ID, "detail-pattern").text == target, "fold2d: search shows the wrong region")
    wildcard = "1?????|*"
    expected = sum(1 for r in regions if fnmatch.fnmatchcase(r["pattern"], wildcard.replace("|", "[|]")))
    box.clear()
    box.send_keys(wildcard + Keys.ENTER)
    time.sleep(0.05)
    matches = len(driver.find_elements(By.CSS_SELECTOR, "#search-matches polygon"))
    check(matches == expected, "fold2d: wildcard %s marks %d regions, fnmatch finds %d" % (wildcard, matches, expected))
    # Keyboard: the map takes focus; n steps to the first region, n again to the next.
    driver.execute_script("document.getElementById('plot').focus()")
    check(driver.execute_script("return document.activeElement.id") == "plot", "fold2d: the map cannot take focus")
    driver.execute_script("pleatReport.browser.selected = -1")
    ActionChains(driver).send_keys("n").perform()
    check(driver.find_element(By.ID, "detail-pattern").text == regions[0]["pattern"], "fold2d: key n does not show region 0")
    ActionChains(driver).send_keys("n").perform()
    check(driver.find_element(By.ID, "detail-pattern").text == regions[1]["pattern"], "fold2d: key n twice does not show region 1")
    # Tab order reaches the zoom buttons, the search box, the map and the layer toggles.
    driver.execute_script("document.activeElement.blur(); window.scrollTo(0, 0)")
    reached = set()
    for _ in range(40):
        ActionChains(driver).send_keys(Keys.TAB).perform()
        reached.add(driver.execute_script("return document.activeElement.id"))
    for wanted in ("zoom-in", "pattern-search", "plot", "toggle-layer-1"):
        check(wanted in reached, "fold2d: Tab never reaches #%s (reached %s)" % (wanted, sorted(reached)))
    driver.find_element(By.ID, "zoom-in").click()
    driver.save_screenshot(os.path.join(shots, "fold2d.png"))
    # Print: the controls go, the summary and the map stay.
    driver.execute_cdp_cmd("Emulation.setEmulatedMedia", {"media": "print"})
    check(not driver.find_element(By.CSS_SELECTOR, ".controls").is_displayed(), "fold2d: print view shows the controls")
    check(not driver.find_element(By.ID, "layer-toggles").is_displayed(), "fold2d: print view shows the toggles")
    check(driver.find_element(By.ID, "plot").is_displayed() and driver.find_element(By.ID, "summary").is_displayed(),
          "fold2d: print view lost the map or the summary")
    driver.execute_cdp_cmd("Emulation.setEmulatedMedia", {"media": ""})
    # 200% zoom: a 1400 px window at device scale 2 is 700 CSS px wide; nothing may
    # overflow sideways and the side panel moves under the map.
    driver.execute_cdp_cmd("Emulation.setDeviceMetricsOverride",
                           {"width": 700, "height": 900, "deviceScaleFactor": 2, "mobile": False})
    wide = driver.execute_script("return [document.documentElement.scrollWidth, document.documentElement.clientWidth]")
    check(wide[0] <= wide[1] + 1, "fold2d: at 200%% zoom the page is %d px wide in a %d px window" % tuple(wide))
    tops = driver.execute_script("return [document.querySelector('.figure').getBoundingClientRect().bottom, "
                                 "document.querySelector('.side').getBoundingClientRect().top]")
    check(tops[1] >= tops[0] - 1, "fold2d: at 200%% zoom the side panel does not move under the map")
    driver.save_screenshot(os.path.join(shots, "fold2d-zoom200.png"))
    driver.execute_cdp_cmd("Emulation.clearDeviceMetricsOverride", {})
    check_quiet(driver, plane_page, url)

    # ---- 1 input ----------------------------------------------------------------
    url = open_page(driver, line_page)
    data = embedded(line_page)
    pieces = data["map"]["regions"]
    for piece in widest(pieces, 3):
        x = piece["point_double"][0]
        y = (piece["from"][1] + piece["to"][1]) / 2
        shown = hover(driver, x, y)
        check(shown == piece["pattern"], "ramp1d: pointing at piece %d shows %r, not %r" % (piece["id"], shown, piece["pattern"]))
        slope = driver.find_element(By.ID, "detail-slope").text
        check(slope.split(" ")[0] == piece["map"]["A"][0][0], "ramp1d: slope %r, data %r" % (slope, piece["map"]["A"][0][0]))
        exact = inspect_patterns(ramp, piece["point"][0], "--box", "-2,3")
        check(exact == [shown], "ramp1d: page %r, pleat inspect --at %s says %s" % (shown, piece["point"][0], exact))
    driver.save_screenshot(os.path.join(shots, "ramp1d.png"))
    check_quiet(driver, line_page, url)

    # ---- 3 inputs: the slices x3 = -1/2 and 1/4, the second picked by the slider ----------
    url = open_page(driver, slice_page)
    data = embedded(slice_page)
    slider = driver.find_element(By.ID, "slice-index")
    slider.send_keys(Keys.ARROW_RIGHT)
    check(driver.find_element(By.ID, "slice-value").text == "1/4", "sensor3d: the slider does not reach x3 = 1/4")
    for region in widest(data["slices"][1]["map"]["regions"], 3):
        shown = hover(driver, *region["point_double"])
        check(shown == region["pattern"], "sensor3d slice: pointing shows %r, not %r" % (shown, region["pattern"]))
        point3 = ",".join(region["point"] + ["1/4"])
        exact = inspect_patterns(sensor, point3, "--box", "-1,1")
        check(exact == [shown], "sensor3d slice: page %r at %s, pleat inspect --at says %s" % (shown, point3, exact))
    driver.save_screenshot(os.path.join(shots, "sensor3d-slice.png"))
    check_quiet(driver, slice_page, url)

    # ---- a survey ---------------------------------------------------------------------
    url = open_page(driver, survey_page)
    counts, samples = {}, {}
    with open(survey_file) as lines:
        next(lines)
        for line in lines:
            sample = json.loads(line)
            if sample["certified"]:
                value = sample["functional_dimension"]
                counts[value] = counts.get(value, 0) + 1
                samples.setdefault(value, []).append(sample["sample"])
    bars = driver.find_elements(By.CSS_SELECTOR, "#bars rect.bar")
    drawn = {int(b.get_attribute("data-value")): int(b.get_attribute("data-count")) for b in bars}
    check({v: c for v, c in drawn.items() if c} == counts, "survey: bars %s, file %s" % (drawn, counts))
    value = max(counts, key=lambda v: counts[v])
    bar = next(b for b in bars if int(b.get_attribute("data-value")) == value)
    ActionChains(driver).move_to_element(bar).perform()
    listed = driver.find_element(By.ID, "detail-samples").text
    check(listed == ", ".join(str(s) for s in sorted(samples[value])), "survey: bar %d lists %r, file %s" % (value, listed, samples[value]))
    driver.save_screenshot(os.path.join(shots, "survey.png"))
    check_quiet(driver, survey_page, url)
finally:
    driver.quit()
    shutil.rmtree(work, ignore_errors=True)

print("screenshots in %s (%.1f s)" % (shots, time.time() - started))
if failures:
    sys.exit(1)
print("OK")
