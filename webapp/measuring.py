"""The measuring page: take or pick a photo, see the reading, adjust the region."""

from flask import Blueprint, render_template

from glowtemp.estimation.scales import NAMES_ARE_LOOSE

blueprint = Blueprint("measuring", __name__)


@blueprint.get("/")
def index():
    return render_template("measure.html", names_are_loose=NAMES_ARE_LOOSE)
