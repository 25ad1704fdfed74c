"""The progress indicator: silent off a terminal, one rewritten line on one."""

import io
import threading

import pytest

from fluxpart.progress import Progress, progress_enabled


class _Terminal(io.StringIO):
    """A text stream that says it is a terminal."""

    def isatty(self):
        return True


class _Closed(io.StringIO):
    """A stream whose isatty fails, as a closed file's does."""

    def isatty(self):
        raise ValueError("I/O operation on closed file")


def test_silent_when_the_stream_is_not_a_terminal():
    """A pipe or file (not a tty) receives nothing, however many steps are counted."""
    stream = io.StringIO()
    with Progress(5, "bootstrap", stream=stream) as progress:
        for _ in range(5):
            progress.advance()
    assert stream.getvalue() == ""
    assert progress.done == 5 and progress.enabled is False


def test_writes_carriage_return_updates_when_forced():
    """Forced on, it rewrites one line with \\r and ends it with a newline."""
    stream = io.StringIO()
    with Progress(4, "figures", stream=stream, enabled=True) as progress:
        progress.advance()
        progress.advance(3)
    text = stream.getvalue()
    assert text.startswith("\rfigures: 0/4 (  0 %)")
    assert "\rfigures: 1/4 ( 25 %)" in text
    assert text.endswith("\rfigures: 4/4 (100 %)\n")
    assert text.count("\n") == 1


def test_a_shorter_line_covers_the_longer_one_before_it():
    """The command line changes the label between steps; "\\r" alone left the end of a
    longer line standing after a shorter one ("processing: budgets: 7/7 (100 %)nd
    partitioning (ustar_p84): 6/7 ( 85 %)" on a terminal, review46). A shorter line is
    padded with spaces to the longest written before it."""
    stream = io.StringIO()
    with Progress(2, "processing: a long stage name", stream=stream, enabled=True) as progress:
        progress.advance()
        progress.label = "processing: short"
        progress.advance()
    long_line = "\rprocessing: a long stage name: 1/2 ( 50 %)"
    short_line = "\rprocessing: short: 2/2 (100 %)"
    assert long_line in stream.getvalue()
    assert short_line + " " * (len(long_line) - len(short_line)) + "\r" in stream.getvalue()


def test_a_terminal_enables_it_by_default():
    """On a terminal it is on unless forced off."""
    terminal = _Terminal()
    with Progress(2, "sites", stream=terminal) as progress:
        progress.advance(2)
    assert "sites: 2/2" in terminal.getvalue()
    silent = _Terminal()
    with Progress(2, "sites", stream=silent, enabled=False) as progress:
        progress.advance(2)
    assert silent.getvalue() == ""


def test_progress_enabled_needs_a_terminal_and_no_quiet():
    """progress_enabled: on only for a terminal without --quiet; a closed stream is off."""
    assert progress_enabled(False, _Terminal()) is True
    assert progress_enabled(True, _Terminal()) is False
    assert progress_enabled(False, io.StringIO()) is False
    assert progress_enabled(False, _Closed()) is False
    assert progress_enabled(False, object()) is False


def test_updates_are_throttled_to_whole_percent_steps():
    """Ten thousand steps write at most one update per whole percent (plus start and end)."""
    stream = io.StringIO()
    with Progress(10_000, "draws", stream=stream, enabled=True) as progress:
        for _ in range(10_000):
            progress.advance()
    assert 100 <= stream.getvalue().count("\r") <= 103


def test_unknown_total_counts_up():
    """A total of 0 shows the running count without a percentage."""
    stream = io.StringIO()
    with Progress(0, "records", stream=stream, enabled=True) as progress:
        progress.advance(7)
    assert stream.getvalue().endswith("\rrecords: 7\n")


def test_advance_from_threads_counts_every_step():
    """Steps counted from several threads (the scenario pool) are all counted."""
    stream = io.StringIO()
    progress = Progress(400, "scenarios", stream=stream, enabled=True)
    workers = [threading.Thread(target=lambda: [progress.advance() for _ in range(100)])
               for _ in range(4)]
    for worker in workers:
        worker.start()
    for worker in workers:
        worker.join()
    progress.close()
    assert progress.done == 400
    assert stream.getvalue().endswith("400/400 (100 %)\n")


@pytest.mark.parametrize("total", [-1, 2.5, True, "3"])
def test_bad_total_is_a_clear_error(total):
    """A negative or non-integer total is rejected, naming the value."""
    with pytest.raises(ValueError, match="Progress total"):
        Progress(total, "x")


def test_process_reports_its_steps_through_logging(caplog):
    """process() logs each progress step at INFO on the 'fluxpart' logger (issue 15), the
    route a notebook or a service reads with the standard logging module."""
    import logging

    import fluxpart

    frame, _ = fluxpart.demo.site_year(seed=0)
    frame = frame.loc["2021-05-01":"2021-06-29"]
    config = fluxpart.Config(ustar_method="fixed", clock_check="off")
    labels = []
    with caplog.at_level(logging.INFO, logger="fluxpart"):
        fluxpart.process(frame, fluxpart.demo.SITE, config, progress=labels.append)
    logged = [r.getMessage() for r in caplog.records if r.name.startswith("fluxpart")]
    assert labels and len(logged) >= len(labels)
    assert all(any(label in message for message in logged) for label in labels)


def test_the_u_star_runs_are_named_in_words():
    """The progress line named the u* scenario runs by their internal keys ("gap filling
    and partitioning (ustar_p16)"; review46); it names the bootstrap percentile."""
    from fluxpart.ustar_runs import _step_label

    assert _step_label("ustar_p16") == ("gap filling and partitioning (u* threshold at its "
                                       "bootstrap percentile 16)")
    assert _step_label("central") == "gap filling and partitioning (central run)"
