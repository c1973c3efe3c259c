"""A graphical model chaining two thrustmap algorithms, built as the GIS's model designer would save it."""

CHILD_OUTPUT = "means:domain_means"  # the model's output parameter: <child id>:<output name>
TICK_PARAMS = {"length": 400.0, "azimuth_field": "strike"}
MEAN_PARAMS = {"min_count": 2}


def ticks_then_domain_means(*, linked=True):
    """Model: stations -> thrustmap:dip-ticks -> (ticks) -> thrustmap:domain-mean-plane <- domains.

    ``linked=False`` leaves the ticks-to-attitudes link out (a model that must not validate).
    """
    from qgis.core import (
        QgsProcessing,
        QgsProcessingModelAlgorithm,
        QgsProcessingModelChildAlgorithm,
        QgsProcessingModelChildParameterSource,
        QgsProcessingModelOutput,
        QgsProcessingModelParameter,
        QgsProcessingParameterFeatureSource,
    )

    static = QgsProcessingModelChildParameterSource.fromStaticValue
    model_input = QgsProcessingModelChildParameterSource.fromModelParameter
    model = QgsProcessingModelAlgorithm("ticks_then_domain_means", "thrustmap tests")
    for name, kind in (
        ("stations", QgsProcessing.TypeVectorPoint),
        ("domains", QgsProcessing.TypeVectorPolygon),
    ):
        model.addModelParameter(
            QgsProcessingParameterFeatureSource(name, name, [kind]),
            QgsProcessingModelParameter(name),
        )

    def with_defaults(child):
        # As the model designer does: every parameter not linked holds its default value.
        for definition in child.algorithm().parameterDefinitions():
            if definition.isDestination() or definition.name() in child.parameterSources():
                continue
            if definition.defaultValue() is not None:
                child.addParameterSources(definition.name(), [static(definition.defaultValue())])
        return child

    ticks = QgsProcessingModelChildAlgorithm("thrustmap:dip-ticks")
    ticks.setChildId("ticks")
    ticks.addParameterSources("stations", [model_input("stations")])
    for key, value in TICK_PARAMS.items():
        ticks.addParameterSources(key, [static(value)])
    model.addChildAlgorithm(with_defaults(ticks))
    means = QgsProcessingModelChildAlgorithm("thrustmap:domain-mean-plane")
    means.setChildId("means")
    if linked:
        means.addParameterSources(
            "attitudes",
            [QgsProcessingModelChildParameterSource.fromChildOutput("ticks", "out_ticks")],
        )
    means.addParameterSources("domains", [model_input("domains")])
    for key, value in MEAN_PARAMS.items():
        means.addParameterSources(key, [static(value)])
    output = QgsProcessingModelOutput("domain_means", "Domain means")
    output.setChildId("means")
    output.setChildOutputName("out_domain_means")
    means.setModelOutputs({"domain_means": output})
    model.addChildAlgorithm(with_defaults(means))
    model.updateDestinationParameters()
    return model


def expected_domain_means(stations, domains):
    """The same chain in plain Python."""
    from thrustmap.tools.registry import get_tool

    ticks = get_tool("dip-ticks").run({"stations": stations}, TICK_PARAMS)["ticks"]
    return get_tool("domain-mean-plane").run({"attitudes": ticks, "domains": domains}, MEAN_PARAMS)[
        "domain_means"
    ]
