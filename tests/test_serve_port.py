"""`nightjar serve` keeps its address across restarts when it can: the port
of the last start of a home is taken again if free, else any free one."""

import socket

from service.embedded import bind_server


def app(environ, start_response):          # a WSGI app that is never called
    start_response("204 No Content", [])
    return []


def test_the_port_of_the_last_start_is_taken_again(tmp_path):
    first = bind_server(app, tmp_path, "127.0.0.1", 0)
    port = int(first.effective_port)
    first.close()
    assert (tmp_path / "port").read_text().strip() == str(port)
    again = bind_server(app, tmp_path, "127.0.0.1", 0)
    try:
        assert int(again.effective_port) == port
    finally:
        again.close()


def test_a_taken_port_gives_way_to_a_free_one(tmp_path):
    first = bind_server(app, tmp_path, "127.0.0.1", 0)
    port = int(first.effective_port)
    first.close()
    squatter = socket.socket()
    squatter.bind(("127.0.0.1", port))
    squatter.listen()
    try:
        other = bind_server(app, tmp_path, "127.0.0.1", 0)
        try:
            assert int(other.effective_port) != port
            assert (tmp_path / "port").read_text().strip() == str(other.effective_port)
        finally:
            other.close()
    finally:
        squatter.close()


def test_a_port_asked_for_is_not_swapped_silently(tmp_path):
    squatter = socket.socket()
    squatter.bind(("127.0.0.1", 0))
    squatter.listen()
    try:
        taken = squatter.getsockname()[1]
        try:
            bind_server(app, tmp_path, "127.0.0.1", taken)
        except OSError:
            pass
        else:
            raise AssertionError("a taken --port was replaced by another one")
    finally:
        squatter.close()
