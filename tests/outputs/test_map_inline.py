"""Long texts of map.html put in after rendering: the page is the one folium renders with them inside."""

import base64
import re

import pytest

from geo.outputs.webmap import _Inlined, _stable_ids

# Texts as the map holds them: CRLF lines (Leaflet's CSS has them), lone CR, trailing newlines,
# braces that are not template syntax, and one with template syntax (put in whole, not inlined).
TEXTS = [
    "<style>\r\n.a { color: red; }\r\n</style>\r\n",
    "line one\rline two\n\n",
    "function f(x) { return {a: x}; }\n",
    "no newline at the end",
    "{{ not_a_value }} stays a template",
]


def _page(element_texts, image_uri):
    from branca.element import Element
    from folium import Map
    from folium.raster_layers import ImageOverlay

    fmap = Map(location=[0.0, 0.0], zoom_start=3, tiles=None)
    for i, text in enumerate(element_texts):
        fmap.get_root().header.add_child(Element(text), name=f"text{i}")
    ImageOverlay(image_uri, bounds=[[0.0, 0.0], [1.0, 1.0]], name="image").add_to(fmap)
    return fmap.get_root().render()


def test_inlined_texts_give_the_page_folium_renders_with_the_texts_inside():
    # Independent method: folium and jinja2 rendering the texts themselves (the page before this
    # change); element ids are random in both pages, so both are numbered in order first.
    uri = "data:image/png;base64," + base64.b64encode(bytes(range(256)) * 40).decode("ascii")
    whole = _stable_ids(_page(TEXTS, uri))
    inlined = _Inlined()
    tokens = [inlined.element_text(text) for text in TEXTS]
    assert tokens[-1] == TEXTS[-1]  # template syntax: put in whole
    assert all(token != text for token, text in zip(tokens[:-1], TEXTS[:-1]))
    filled = _stable_ids(inlined.fill(_page(tokens, inlined.data_uri(uri))))
    assert filled == whole
    assert "mastplan-inline" not in filled


def test_a_data_uri_that_json_would_escape_is_put_in_whole():
    inlined = _Inlined()
    odd = "data:image/png;base64,<&>'"
    assert inlined.data_uri(odd) == odd
    assert inlined.fill("page") == "page"


def test_a_token_missing_from_the_page_is_an_error_not_a_silent_hole():
    inlined = _Inlined()
    token = inlined.element_text("some text")
    assert re.fullmatch(r"<!--mastplan-inline-[0-9a-f]{32}-->", token)
    with pytest.raises(RuntimeError, match="exactly once"):
        inlined.fill("a page without it")


def test_the_demo_map_has_no_token_left(tmp_path):
    from tests_support import DEMO_SITE, without_surface

    from geo.outputs.geojson import study_layers
    from geo.outputs.webmap import write_map
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    result = run_study(without_surface(load_site(DEMO_SITE)))  # the map shows nothing of the surface prediction
    write_map(result, study_layers(result), tmp_path / "map.html")
    page = (tmp_path / "map.html").read_text(encoding="utf-8")
    assert "mastplan-inline" not in page
    assert page.count("data:image/png;base64,") >= 1 and "L.imageOverlay" in page
