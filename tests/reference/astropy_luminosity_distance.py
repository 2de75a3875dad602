"""Luminosity distances of flat Lambda-CDM from astropy, for the reference tests.

Input (JSON, on stdin or as the first argument):
    {"h0_km_s_mpc": 70, "omega_m": 0.3, "z": [0.01, 0.05]}
Output (JSON on stdout):
    {"astropy_version": "...", "c_km_s": ..., "luminosity_distance_mpc": [...]}

The cosmology is astropy.cosmology.FlatLambdaCDM with Tcmb0 = 0 (no radiation),
the model the kinematic series of the Hubble-flow rung is compared with.
Errors go to stderr with exit code 1.
"""
import json
import sys


def main() -> int:
    raw = sys.argv[1] if len(sys.argv) > 1 else sys.stdin.read()
    try:
        request = json.loads(raw)
        h0 = float(request["h0_km_s_mpc"])
        omega_m = float(request["omega_m"])
        redshifts = [float(z) for z in request["z"]]
    except (ValueError, KeyError, TypeError) as error:
        print(f"astropy_luminosity_distance: bad request {raw!r}: {error}", file=sys.stderr)
        return 1

    import astropy
    from astropy import constants
    from astropy.cosmology import FlatLambdaCDM

    cosmology = FlatLambdaCDM(H0=h0, Om0=omega_m, Tcmb0=0)
    distances = cosmology.luminosity_distance(redshifts).to_value("Mpc")
    json.dump(
        {
            "astropy_version": astropy.__version__,
            "c_km_s": constants.c.to_value("km/s"),
            "luminosity_distance_mpc": [float(d) for d in distances],
        },
        sys.stdout,
    )
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
