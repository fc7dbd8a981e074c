"""Writes the INVENTED limit curves of the darksieve demo scenario (scans/demo/curves/*.csv).

The curves are smooth made-up shapes with a plausible look (a sensitivity minimum, a rise towards
low mass, linear growth at high mass). They come from no experiment and must not be used as
physics input. Run: python3 scans/demo/make-curves.py
"""
import math
import os

HERE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "curves")


def grid(lo, hi, n):
    return [lo * (hi / lo) ** (i / (n - 1)) for i in range(n)]


def write(name, header, note, rows):
    with open(os.path.join(HERE, name), "w") as f:
        f.write("# INVENTED demo curve for darksieve: not a measurement, not from any experiment.\n")
        f.write(f"# {note}\n")
        f.write(header + "\n")
        for x, y in rows:
            f.write(f"{x:.6g}, {y:.6g}\n")


os.makedirs(HERE, exist_ok=True)
masses = grid(6.0, 1.0e4, 40)
# fictional xenon-like detector 'lumen_xe': spin-independent proton limit, 90% CL (invented)
write("lumen-xe-si-p.csv", "m_chi [GeV], sigma_si_p [cm^2]",
      "shape: 3e-47 cm^2 * (m/30 GeV) * (1 + (15 GeV/m)^6)",
      [(m, 3e-47 * (m / 30.0) * (1.0 + (15.0 / m) ** 6)) for m in masses])
# same fictional detector: spin-dependent neutron limit (invented)
write("lumen-xe-sd-n.csv", "m_chi [GeV], sigma_sd_n [cm^2]",
      "shape: 4e-42 cm^2 * (m/40 GeV) * (1 + (15 GeV/m)^6)",
      [(m, 4e-42 * (m / 40.0) * (1.0 + (15.0 / m) ** 6)) for m in masses])
# fictional gamma-ray search towards the fictional satellite 'corvid': annihilation limit (invented)
write("corvid-sigv.csv", "m_chi [GeV], sigv0 [cm^3/s]",
      "shape: 2.5e-26 cm^3/s * (m/100 GeV) * (1 + 10 GeV/m)",
      [(m, 2.5e-26 * (m / 100.0) * (1.0 + 10.0 / m)) for m in grid(5.0, 1.0e4, 30)])
