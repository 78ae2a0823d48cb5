"""Firings on the web (Flask test client): pages, forms, the JSON API and their error paths."""

import io
import zipfile

import pytest

from glowtemp.firinglog.bundle import import_bundle
from glowtemp.firinglog.logbook import Logbook


def logbook(app) -> Logbook:
    return app.extensions["glowtemp"]["logbook"]


@pytest.fixture
def firing_id(web_client):
    answer = web_client.post("/api/firings", json={"name": "Cone 6 glaze", "kind": "glaze", "target_cone": "6"})
    assert answer.status_code == 201
    return answer.get_json()["id"]


def upload(client, firing_id, jpeg, **fields):
    data = {"photo": (io.BytesIO(jpeg), "spy.jpg"), **fields}
    return client.post(f"/api/firings/{firing_id}/readings", data=data, content_type="multipart/form-data")


def test_api_firings_create_list_get_patch_delete(web_client, firing_id):
    assert [f["name"] for f in web_client.get("/api/firings").get_json()["firings"]] == ["Cone 6 glaze"]
    changed = web_client.patch(f"/api/firings/{firing_id}", json={"status": "closed", "kiln": "Big one"})
    assert changed.status_code == 200 and changed.get_json()["status"] == "closed" and changed.get_json()["kiln"] == "Big one"
    body = web_client.get(f"/api/firings/{firing_id}").get_json()
    assert body["firing"]["name"] == "Cone 6 glaze" and body["readings"] == []
    assert body["rates"]["last_step_c_per_h"] is None
    assert web_client.delete(f"/api/firings/{firing_id}").status_code == 204
    assert web_client.get(f"/api/firings/{firing_id}").status_code == 404


@pytest.mark.parametrize(
    "body, words",
    [
        ({"name": "x", "kind": "party"}, "kind of firing"),
        ({"kind": "glaze"}, "name is needed"),
        ({"name": "x", "target_c": "very hot"}, "number of °C"),
        ({"name": "x", "target_cone": "99"}, "cone table"),
    ],
)
def test_api_refuses_bad_firings_in_plain_words(web_client, body, words):
    answer = web_client.post("/api/firings", json=body)
    assert answer.status_code == 400 and words in answer.get_json()["error"]
    assert web_client.get("/api/firings").get_json()["firings"] == []


def test_api_patch_errors(web_client, firing_id):
    assert web_client.patch(f"/api/firings/{firing_id}", data={"status": "closed"}).status_code == 400  # not JSON
    answer = web_client.patch(f"/api/firings/{firing_id}", json={"colour": "red"})
    assert answer.status_code == 400 and "no field colour" in answer.get_json()["error"]
    assert web_client.patch("/api/firings/999", json={"status": "closed"}).status_code == 404
    assert web_client.get(f"/api/firings/{firing_id}").get_json()["firing"]["status"] == "open"


def test_api_reading_into_a_firing_with_trusted_values(web_app, web_client, firing_id, two_halves_jpeg):
    answer = upload(web_client, firing_id, two_halves_jpeg, reference_f="1950", cone="5", cone_state="bent",
                    note="peep", region="0,0,150,240")  # fmt: skip
    assert answer.status_code == 201
    body = answer.get_json()
    # NIST SP 811 B.9: t_C = (t_F - 32) * 5/9, so 1950 °F is 1065.56 °C.
    assert body["reference_c"] == pytest.approx((1950 - 32) * 5 / 9)
    assert (body["cone"], body["cone_state"], body["note"], body["firing_id"]) == ("5", "bent", "peep", firing_id)
    assert body["status"] == "ok" and body["region"]["text"] == "0,0,150,240"
    assert body["image"] == {"width": 320, "height": 240}  # the rendered test photo's size
    stored = logbook(web_app).get_reading(body["id"])
    assert logbook(web_app).photo_path(stored["photo_key"]).read_bytes() == two_halves_jpeg
    edited = web_client.patch(f"/api/firings/{firing_id}/readings/{body['id']}", json={"reference_c": 1066, "note": ""})
    assert edited.status_code == 200 and edited.get_json()["reference_c"] == 1066 and edited.get_json()["note"] is None
    refused = web_client.patch(f"/api/firings/{firing_id}/readings/{body['id']}", json={"photo_key": "x"})
    assert refused.status_code == 400
    assert web_client.patch(f"/api/firings/{firing_id}/readings/999", json={"note": "x"}).status_code == 404


@pytest.mark.parametrize(
    "fields, words",
    [
        ({"cone": "99"}, "cone table"),
        ({"cone_state": "bent"}, "needs the number of the cone"),
        ({"reference_c": "hot"}, "number of °C"),
        ({"reference_c": "1000", "reference_f": "1832"}, "not both"),
        ({"region": "1,2,3"}, "4 whole numbers"),
        ({"taken_at": "noon"}, "date and time"),
    ],
)
def test_api_reading_refusals_store_nothing(web_app, web_client, firing_id, two_halves_jpeg, fields, words):
    answer = upload(web_client, firing_id, two_halves_jpeg, **fields)
    assert answer.status_code == 400 and words in answer.get_json()["error"]
    assert logbook(web_app).readings_in(firing_id) == []
    assert logbook(web_app).photos.keys() == []


def test_api_reading_needs_a_photo_and_a_firing(web_client, firing_id, two_halves_jpeg):
    answer = web_client.post(f"/api/firings/{firing_id}/readings", data={"note": "x"}, content_type="multipart/form-data")
    assert answer.status_code == 400 and "photo" in answer.get_json()["error"]
    assert upload(web_client, firing_id, b"not an image").status_code == 422
    assert upload(web_client, 999, two_halves_jpeg).status_code == 404


def test_exports(web_app, web_client, firing_id, two_halves_jpeg, tmp_path):
    upload(web_client, firing_id, two_halves_jpeg, reference_c="-5", note="=1+1")
    csv_answer = web_client.get(f"/api/firings/{firing_id}/export.csv")
    assert csv_answer.status_code == 200 and csv_answer.mimetype == "text/csv"
    assert "attachment" in csv_answer.headers["Content-Disposition"]
    text = csv_answer.get_data(as_text=True)
    assert ",-5.0," in text and "\"'=1+1\"" in text
    zip_answer = web_client.get(f"/api/firings/{firing_id}/export.zip")
    assert zip_answer.mimetype == "application/zip"
    assert "manifest.json" in zipfile.ZipFile(io.BytesIO(zip_answer.data)).namelist()
    with Logbook(tmp_path / "elsewhere") as other:
        restored = import_bundle(other, io.BytesIO(zip_answer.data))
        assert other.readings_in(restored)[0]["note"] == "=1+1"
    assert web_client.get("/api/firings/999/export.csv").status_code == 404
    assert web_client.get("/api/firings/999/export.zip").status_code == 404


def test_list_page_and_starting_a_firing_by_form(web_client):
    assert "No firings yet" in web_client.get("/firings/").get_data(as_text=True)
    answer = web_client.post("/firings/", data={"name": "Glass fuse", "kind": "glass", "target_f": "1450", "kiln": ""})
    assert answer.status_code == 303
    page = web_client.get(answer.headers["Location"]).get_data(as_text=True)
    assert "Glass fuse" in page and "<svg" in page and "No readings yet" in page
    # 1450 °F is 787.8 °C (NIST SP 811 B.9); the list shows the target in the unit asked for.
    assert "target 787.8 °C" in web_client.get("/firings/").get_data(as_text=True)
    assert "target 1450 °F" in web_client.get("/firings/?unit=f").get_data(as_text=True)
    refused = web_client.post("/firings/", data={"name": "", "kind": "glass"})
    assert refused.status_code == 400 and "name is needed" in refused.get_data(as_text=True)


def test_firing_page_reading_forms(web_app, web_client, firing_id, two_halves_jpeg):
    added = web_client.post(
        f"/firings/{firing_id}/readings",
        data={"photo": (io.BytesIO(two_halves_jpeg), "spy.jpg"), "reference": "1832", "reference_unit": "f"},
        content_type="multipart/form-data",
    )
    assert added.status_code == 303
    (reading,) = logbook(web_app).readings_in(firing_id)
    assert reading["reference_c"] == pytest.approx(1000.0)  # 1832 °F = 1000 °C (NIST SP 811 B.9)
    page = web_client.get(f"/firings/{firing_id}").get_data(as_text=True)
    assert "Thermocouple 1000 °C" in page and f'id="reading-{reading["id"]}"' in page
    assert "Thermocouple 1832 °F" in web_client.get(f"/firings/{firing_id}?unit=f").get_data(as_text=True)

    edit = f"/firings/{firing_id}/readings/{reading['id']}/edit"
    answer = web_client.post(edit, data={"reference": "", "reference_unit": "c", "cone": "6", "cone_state": "standing",
                                         "note": "shelf 2", "taken_at": ""})  # fmt: skip
    assert answer.status_code == 303
    edited = logbook(web_app).get_reading(reading["id"])
    assert (edited["reference_c"], edited["cone"], edited["cone_state"], edited["note"]) == (None, "6", "standing", "shelf 2")
    assert edited["taken_at"] == reading["taken_at"]
    assert web_client.post(edit, data={"cone": "", "cone_state": "bent"}).status_code == 400

    delete = f"/firings/{firing_id}/readings/{reading['id']}/delete"
    assert web_client.post(delete, data={}).status_code == 400  # not confirmed
    assert logbook(web_app).get_reading(reading["id"]) is not None
    assert web_client.post(delete, data={"confirm": "yes"}).status_code == 303
    assert logbook(web_app).get_reading(reading["id"]) is None
    assert logbook(web_app).photos.keys() == []


def test_editing_and_deleting_a_firing_by_form(web_app, web_client, firing_id):
    form = {"name": "Renamed", "kind": "bisque", "kiln": "", "target_c": "1000", "target_cone": "", "started_at": "",
            "notes": "", "status": "closed"}  # fmt: skip
    assert web_client.post(f"/firings/{firing_id}/edit", data=form).status_code == 303
    firing = logbook(web_app).get_firing(firing_id)
    assert (firing["name"], firing["kind"], firing["target_c"], firing["target_cone"], firing["status"]) == (
        "Renamed", "bisque", 1000.0, None, "closed")  # fmt: skip
    confirm = web_client.get(f"/firings/{firing_id}/delete").get_data(as_text=True)
    assert "Delete “Renamed”?" in confirm and "cannot be undone" in confirm
    assert logbook(web_app).get_firing(firing_id) is not None  # asking deletes nothing
    assert web_client.post(f"/firings/{firing_id}/delete").status_code == 303
    assert logbook(web_app).get_firing(firing_id) is None
    assert web_client.get(f"/firings/{firing_id}").status_code == 404


def test_firings_area_is_in_the_top_bar(web_client):
    assert 'href="/firings/"' in web_client.get("/").get_data(as_text=True)


def test_long_firings_list_the_newest_readings_first_and_all_on_request(web_app, web_client, firing_id):
    from datetime import datetime, timedelta, timezone

    log = logbook(web_app)
    key = log.store_photo(b"one photo for all", ".jpg")
    start = datetime(2024, 3, 9, 6, tzinfo=timezone.utc)
    for n in range(32):
        result = {"status": "ok", "temperature_c": 600 + 10 * n, "interval_68_c": [590 + 10 * n, 610 + 10 * n],
                  "interval_95_c": [580 + 10 * n, 620 + 10 * n], "temperature_f": None, "warnings": []}  # fmt: skip
        log.add_reading(photo_key=key, photo_name=f"{n}.jpg", result=result, taken_at=start + timedelta(minutes=20 * n),
                        firing_id=firing_id)  # fmt: skip
    page = web_client.get(f"/firings/{firing_id}").get_data(as_text=True)
    assert page.count('<article class="card reading"') == 30 and "Show all 32 readings" in page
    assert page.index("31.jpg") < page.index("30.jpg")  # newest first
    # Climb between the last two readings: 10 °C in 20 minutes is +30 °C/h; their +-10 °C bands give
    # sqrt(2) * 10 / (1/3 h) = 42 °C/h (GUM 5.1.2), which supports steps of 20 °C/h: +40 ± 40.
    assert "last step <b>+40 ± 40 °C/h</b>" in page
    everything = web_client.get(f"/firings/{firing_id}?all=1").get_data(as_text=True)
    assert everything.count('<article class="card reading"') == 32 and "Show all" not in everything
    assert "all=1" in everything.split('id="reading-1"')[1].split("</article>")[0]  # its forms keep the view


def test_profile_from_a_firing_in_one_step(web_app, web_client, firing_id, two_halves_jpeg):
    from conftest import LEFT_HALF_C

    # The left half of the test photo was rendered at LEFT_HALF_C: that is its trusted value.
    upload(web_client, firing_id, two_halves_jpeg, region="10,10,130,220", reference_c=str(LEFT_HALF_C))
    page = web_client.get(f"/firings/{firing_id}").get_data(as_text=True)
    assert "Make a camera profile from 1 trusted reading" in page
    made = web_client.post(f"/firings/{firing_id}/profile", data={"name": "web-cam"})
    assert made.status_code == 200 and "Camera profile “web-cam” made" in made.get_data(as_text=True)
    refused = web_client.post(f"/firings/{firing_id}/profile", data={"name": ""})
    assert refused.status_code == 400 and "No profile was made" in refused.get_data(as_text=True)


def test_climb_rates_are_shown_with_their_band_and_unit():
    from glowtemp.web.firings import climb

    # A band of 38.7 °C/h supports 10 °C/h steps (rounding_step: at most half the half-width).
    assert climb(100.4, "c", 38.7) == "+100 ± 40 °C/h"
    assert climb(-42.0, "c", 3.0) == "-42 ± 3 °C/h"
    # In °F a rate difference is 9/5 of the °C one, with no 32 °F offset (NIST SP 811 B.9): 180 ± 72.
    assert climb(100.0, "f", 40.0) == "+180 ± 80 °F/h"
    assert climb(None, "c", None) == "–"
    assert climb(55.0, "c", None) == "+55 °C/h (band unknown)"


def test_a_reading_with_only_a_range_shows_the_range(web_client, firing_id):
    # A JPEG without exposure data is read from colour alone, and at 1400 °C the camera
    # population disagrees so much that only a range is honest: the firing page must show that
    # range, as the measuring page does, not "no estimate".
    import io

    from PIL import Image

    from glowtemp.render.synthetic import render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    rendered = render_photo(1673.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(160, 120))
    bare = io.BytesIO()
    Image.fromarray(rendered.codes).save(bare, "JPEG", quality=92)  # no EXIF: no exposure data
    answer = upload(web_client, firing_id, bare.getvalue())
    assert answer.status_code == 201
    result = answer.get_json()
    assert result["status"] == "wide"
    low, high = result["interval_95_c"]
    page = web_client.get(f"/firings/{firing_id}").get_data(as_text=True)
    assert f"somewhere in {low}–{high} °C" in page
