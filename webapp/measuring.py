"""The measuring page: take or pick a photo, see the reading, adjust the region."""

from flask import Blueprint, render_template

blueprint = Blueprint("measuring", __name__)


@blueprint.get("/")
def index():
    return render_template("measure.html")
