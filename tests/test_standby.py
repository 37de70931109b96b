"""parallel.Standby: a child forked early that runs one call later and sends back its value."""

import os

import pytest

from screening import parallel

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")


def _double(x):
    return 2 * x


def _fail(text):
    raise ValueError(text)


def _die():
    os._exit(3)


def test_the_call_runs_in_the_child_and_its_value_comes_back():
    sb = parallel.Standby(("json",))
    assert sb.call(os.getpid) != os.getpid()
    sb = parallel.Standby(())
    blob = bytes(range(256)) * 20000          # 5 MB: more than a pipe holds at once, both ways
    assert sb.call(_double, blob) == blob * 2


def test_an_exception_in_the_child_is_raised_here():
    with pytest.raises(ValueError, match="the given value"):
        parallel.Standby(()).call(_fail, "the given value")


def test_a_child_that_dies_gives_no_answer():
    with pytest.raises(parallel.StandbyGone):
        parallel.Standby(()).call(_die)


def test_an_unused_standby_is_stopped_and_reaped():
    sb = parallel.Standby(())
    pid = sb.pid
    sb.close()
    with pytest.raises(ChildProcessError):
        os.waitpid(pid, 0)


def test_a_call_that_cannot_be_handed_over_gives_no_answer():
    with pytest.raises(parallel.StandbyGone):
        parallel.Standby(()).call(lambda: 1)


def test_a_call_sent_at_once_is_answered_later():
    sb = parallel.Standby(())
    sb.send(_double, 4)
    assert sb.answer() == 8


def _unpicklable_answer():
    return lambda: 1


def test_an_answer_that_cannot_come_back_gives_no_answer():
    with pytest.raises(parallel.StandbyGone):
        parallel.Standby(()).call(_unpicklable_answer)
