"""Running a geometry script on its own: build one body and write it as a gmsh .msh file."""


def write_msh(model_name, build, args, output):
    """Build with ``build(*args)`` in a fresh gmsh session, mesh the surface and write ``output``.

    Parameters
    ----------
    model_name : str
        gmsh model name.
    build : callable
        A script's ``build`` function.
    args : tuple
        Its arguments.
    output : str
        The .msh file to write.
    """
    import gmsh

    gmsh.initialize(interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add(model_name)
        build(*args)
        gmsh.model.mesh.generate(2)
        gmsh.write(output)
    finally:
        gmsh.finalize()
    print(f"wrote {output}")
