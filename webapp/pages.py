"""Plain pages: the safety notes."""

from flask import Blueprint, render_template

blueprint = Blueprint("pages", __name__)


@blueprint.get("/safety")
def safety():
    return render_template("safety.html")
