"""The web page in a real browser (headless Chromium): the demo files end to end, hostile text, keyboard use.

Checks behaviour: what a person sees and downloads. The downloads are compared byte for byte
with what `molid identify` and `molid grade` write for the same files and options, run here
as a separate process; the page's own numbers are never checked against molid itself.
"""

import csv
import shutil

import pytest

from tests.web.serving import SAMPLES, command_line

By = pytest.importorskip("selenium.webdriver.common.by", reason="selenium is not installed").By
support = pytest.importorskip("selenium.webdriver.support.ui", reason="selenium is not installed")
Keys = pytest.importorskip("selenium.webdriver.common.keys", reason="selenium is not installed").Keys
ActionChains = pytest.importorskip("selenium.webdriver", reason="selenium is not installed").ActionChains

HOSTILE = ("<script>document.title='owned'</script>", '"><img src=x onerror="document.title=1">')


def _wait(browser, condition, seconds=90):
    return support.WebDriverWait(browser, seconds, poll_frequency=0.2).until(condition)


def _upload(browser, server, files, mode=None):
    """Choose the files on the upload page, upload them, wait for the headers page."""
    browser.get(server.base + "/")
    for role, path in files.items():
        browser.find_element(By.ID, role).send_keys(str(path))
    if mode:
        browser.find_element(By.ID, f"mode-{mode}").click()
    browser.find_element(By.CSS_SELECTOR, "form.upload button[type=submit]").click()
    return _wait(browser, lambda page: page.find_element(By.XPATH, "//button[text()='Analyse']"))


def _analyse(browser, button):
    button.click()
    _wait(browser, lambda page: page.find_elements(By.ID, "downloads-heading")
          or page.find_elements(By.CSS_SELECTOR, ".box.error"))
    assert not browser.find_elements(By.CSS_SELECTOR, ".box.error"), browser.find_element(
        By.CSS_SELECTOR, ".box.error").text


def _download(server, browser, name):
    link = browser.find_element(By.CSS_SELECTOR, f"a[href$='/files/{name}']").get_attribute("href")
    status, headers, body = server.get(link.removeprefix(server.base))
    assert status == 200 and headers["Content-Disposition"].startswith("attachment")
    return body


def _images_loaded(browser):
    """Scroll each plot into view (they load lazily), wait for it; return (complete, width) of each."""
    for image in browser.find_elements(By.CSS_SELECTOR, "main img"):
        browser.execute_script("arguments[0].scrollIntoView()", image)
        _wait(browser, lambda page, image=image: page.execute_script(
            "return arguments[0].complete && arguments[0].naturalWidth > 0", image), 60)
    return browser.execute_script(
        "return Array.from(document.querySelectorAll('main img')).map(i => [i.complete, i.naturalWidth])")


def test_cylinder_check_from_the_demo_files(server, browser, tmp_path):
    """Checks behaviour: the QA demo gives ranked tables and plots, and the CLI's CSV and JSON bytes."""
    for name in ("qa_cylinders.csv", "qa_lab_profile.toml"):
        shutil.copy(SAMPLES / name, tmp_path / name)
    running = command_line(tmp_path, "identify", "qa_cylinders.csv", "--profile", "qa_lab_profile.toml",
                           "-o", "runs.csv", "--json")
    button = _upload(browser, server, {"runs": SAMPLES / "qa_cylinders.csv",
                                       "profile": SAMPLES / "qa_lab_profile.toml"})
    headers = browser.find_element(By.CSS_SELECTOR, "details.headers table").text
    assert "pressure [kPa]" in headers and "1 kPa = 1000 Pa" in headers
    _analyse(browser, button)
    overview = browser.find_elements(By.CSS_SELECTOR, "table.overview tbody tr")
    with open(SAMPLES / "qa_cylinders.csv", newline="", encoding="utf-8") as stream:
        samples = {row["sample"] for row in csv.DictReader(stream)}
    assert len(overview) == len(samples)
    ranked = browser.find_elements(By.XPATH, "//h3[starts-with(text(), 'Candidates, ranked')]")
    assert len(ranked) == len(samples)
    verdicts = [cell.text for cell in browser.find_elements(By.CSS_SELECTOR, "td .verdict")]
    assert "✔ consistent" in verdicts and "✘ excluded" in verdicts  # words and symbols, not colour alone
    loaded = _images_loaded(browser)
    assert len(loaded) == len(samples) and all(done and width > 0 for done, width in loaded)
    assert browser.find_elements(By.CSS_SELECTOR, ".box.safety")
    cli = running.result()
    assert cli.returncode in (0, 1), cli.stderr
    assert _download(server, browser, "runs.csv") == (tmp_path / "runs.csv").read_bytes()
    browser.find_element(By.XPATH, "//button[text()='Make the JSON document']").click()
    _wait(browser, lambda page: page.find_elements(By.CSS_SELECTOR, "a[href$='/files/result.json']"))
    assert _download(server, browser, "result.json") == cli.stdout


def test_graded_section_shows_hostile_names_as_text(server, browser, tmp_path):
    """Checks behaviour: student names that are HTML show as text; grades CSV and JSON are the CLI's."""
    with open(SAMPLES / "teaching_section.csv", newline="", encoding="utf-8") as stream:
        rows = list(csv.reader(stream))
    column = rows[0].index("student")
    rows[1][column], rows[2][column] = HOSTILE
    section = tmp_path / "section.csv"
    with open(section, "w", newline="", encoding="utf-8") as stream:
        csv.writer(stream).writerows(rows)
    shutil.copy(SAMPLES / "teaching_key.csv", tmp_path / "teaching_key.csv")
    running = command_line(tmp_path, "grade", "section.csv", "--key", "teaching_key.csv", "-o", "grades.csv",
                           "--json")
    _analyse(browser, _upload(browser, server, {"runs": section, "key": tmp_path / "teaching_key.csv"}))
    cells = browser.find_elements(By.CSS_SELECTOR, "table.grades tbody td:first-child")
    names = [cell.text for cell in cells]
    assert names[:2] == list(HOSTILE)
    assert browser.title != "owned" and browser.title != "1"  # neither ran
    injected = "return document.querySelectorAll('main img[onerror], main script').length"
    assert browser.execute_script(injected) == 0
    assert all(done and width > 0 for done, width in _images_loaded(browser))  # the class plots
    assert "Class summary" in browser.find_element(By.TAG_NAME, "main").text
    cli = running.result()
    assert cli.returncode in (0, 1), cli.stderr
    assert _download(server, browser, "grades.csv") == (tmp_path / "grades.csv").read_bytes()
    assert _download(server, browser, "grades.json") == cli.stdout
    sections = browser.find_element(By.ID, "section")
    choices = [option.get_attribute("value") for option in sections.find_elements(By.TAG_NAME, "option")]
    sections.send_keys(choices[1])
    browser.find_element(By.XPATH, "//button[text()='Show']").click()
    cells = _wait(browser, lambda page: "section=" in page.current_url and page.find_elements(
        By.CSS_SELECTOR, "table.grades tbody td:nth-child(2)"))
    shown = {cell.text for cell in cells}
    assert shown == {choices[1]}


def test_oversized_upload_gets_its_message(server, browser, tmp_path):
    """Checks behaviour: a file over the limit (1 MB here) is refused with a message naming the limit."""
    big = tmp_path / "big.csv"
    big.write_bytes(b"run,method\n" + b"x" * (1024 * 1024 + 10))
    browser.get(server.base + "/")
    browser.find_element(By.ID, "runs").send_keys(str(big))
    browser.find_element(By.CSS_SELECTOR, "form.upload button[type=submit]").click()
    problem = _wait(browser, lambda page: page.find_element(By.ID, "problem-text").text and
                    page.find_element(By.ID, "problem-text"))
    assert "larger than the upload limit of 1 MB" in problem.text


def _focusable(browser):
    """Give each visible control of the page its number in document order; return the count.

    A group of radio buttons is one stop of the Tab key (the arrow keys move inside it, as
    HTML specifies), so only its checked button, or its first, is numbered.
    """
    return browser.execute_script("""
        const all = Array.from(document.querySelectorAll(
            'a[href], button, input, select, textarea, summary, [tabindex]:not([tabindex="-1"])'));
        const inClosed = e => e.tagName !== 'SUMMARY' && e.closest('details:not([open])') !== null;
        const shown = all.filter(e => !e.disabled && !inClosed(e) && e.getClientRects().length > 0
                                 && getComputedStyle(e).visibility !== 'hidden');
        const stops = shown.filter(e => e.type !== 'radio' || e.checked || !document.querySelector(
            `input[type=radio][name="${e.name}"]:checked`) && e === document.querySelector(
            `input[type=radio][name="${e.name}"]`));
        stops.forEach((e, k) => e.setAttribute('data-k', k));
        return stops.length;""")


def _press(browser, key):
    ActionChains(browser).send_keys(key).perform()  # the keyboard, to whatever has the focus


def _tab_through(browser, count):
    """Press Tab from the page's first control (the skip link); return the controls reached, in order."""
    browser.execute_script("document.querySelector('a.skip').focus()")
    reached = [int(browser.execute_script("return document.activeElement.getAttribute('data-k')"))]
    for _ in range(count + 3):
        _press(browser, Keys.TAB)
        mark = browser.execute_script("return document.activeElement.getAttribute('data-k')")
        if mark is not None:
            reached.append(int(mark))
    return reached


def test_keyboard_reaches_every_control(server, browser):
    """Checks behaviour: Tab alone reaches every control of the upload page, options too, in page order."""
    browser.get(server.base + "/")
    browser.find_element(By.CSS_SELECTOR, "details summary").click()  # open the options
    count = _focusable(browser)
    reached = _tab_through(browser, count)
    assert set(reached) == set(range(count))
    first = [mark for position, mark in enumerate(reached) if mark not in reached[:position]]
    assert first == sorted(first) and count > 20
    browser.find_element(By.ID, "mode-auto").click()
    _press(browser, Keys.ARROW_DOWN)  # inside the group of radio buttons
    assert browser.find_element(By.ID, "mode-identify").is_selected()


def test_keyboard_alone_runs_an_analysis(server, browser):
    """Checks behaviour: with the file chosen, Tab and Enter start the analysis; Tab reaches each result."""
    button = _upload(browser, server, {"runs": SAMPLES / "qa_cylinders.csv"})
    count = _focusable(browser)
    target = int(button.get_attribute("data-k"))
    assert target in _tab_through(browser, count)
    browser.execute_script("document.querySelector('a.skip').focus()")
    for _ in range(count + 3):
        _press(browser, Keys.TAB)
        if browser.execute_script("return document.activeElement.getAttribute('data-k')") == str(target):
            break
    _press(browser, Keys.ENTER)
    _wait(browser, lambda page: page.find_elements(By.ID, "downloads-heading"))
    count = _focusable(browser)
    assert set(_tab_through(browser, count)) == set(range(count))
