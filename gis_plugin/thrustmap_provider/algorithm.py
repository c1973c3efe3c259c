"""One processing algorithm per declared thrustmap tool, generated from its declaration.

The algorithm only translates: features in -> (Geo)DataFrames -> ``tool.run`` ->
(Geo)DataFrames -> feature sinks. Parameter types, ranges, defaults, choices and
help all come from the declaration, so the GIS refuses bad values itself.
"""

import html
import logging
import warnings

from qgis.core import (
    QgsFeatureSink,
    QgsProcessing,
    QgsProcessingAlgorithm,
    QgsProcessingException,
    QgsProcessingParameterBoolean,
    QgsProcessingParameterEnum,
    QgsProcessingParameterFeatureSink,
    QgsProcessingParameterFeatureSource,
    QgsProcessingParameterNumber,
    QgsProcessingParameterString,
)

from thrustmap.errors import ThrustmapError

from .convert import frame_to_features, source_to_frame

__all__ = ["ThrustmapAlgorithm", "OUTPUT_PREFIX", "LAYER_TYPES"]

# Output parameters are named ``out_<declared name>``: a tool may read and write
# layers of the same name (thrust_traces in, thrust_traces out).
OUTPUT_PREFIX = "out_"

LAYER_TYPES = {
    "point": QgsProcessing.TypeVectorPoint,
    "line": QgsProcessing.TypeVectorLine,
    "polygon": QgsProcessing.TypeVectorPolygon,
    "table": QgsProcessing.TypeVector,
    "any": QgsProcessing.TypeVectorAnyGeometry,
}


def _label(name, unit=None):
    text = name.replace("_", " ")
    text = text[:1].upper() + text[1:]
    return f"{text} ({unit})" if unit else text


def _parameter_definition(param):
    """The GIS parameter for one declared ``Param``."""
    # An empty text default means "no text": the GIS refuses empty mandatory strings.
    optional = param.default is None or (param.type == "str" and param.default == "")
    label = _label(param.name, param.unit)
    if param.type in ("float", "int"):
        number_type = (
            QgsProcessingParameterNumber.Double
            if param.type == "float"
            else QgsProcessingParameterNumber.Integer
        )
        definition = QgsProcessingParameterNumber(
            param.name, label, number_type, param.default, optional
        )
        if param.minimum is not None:
            definition.setMinimum(param.minimum)
        if param.maximum is not None:
            definition.setMaximum(param.maximum)
    elif param.type == "bool":
        definition = QgsProcessingParameterBoolean(param.name, label, bool(param.default), optional)
    elif param.type == "choice":
        definition = QgsProcessingParameterEnum(
            param.name,
            label,
            list(param.choices),
            False,
            param.default,
            optional,
            True,  # static strings: values are the choice names, in models and on the command line
        )
    else:
        definition = QgsProcessingParameterString(param.name, label, param.default, False, optional)
    definition.setHelp(param.help)
    return definition


class _FeedbackHandler(logging.Handler):
    """Forwards thrustmap's log records to the algorithm's feedback panel."""

    def __init__(self, feedback):
        super().__init__(logging.INFO)
        self.feedback = feedback

    def emit(self, record):
        message = self.format(record)
        if record.levelno >= logging.WARNING:
            self.feedback.pushWarning(message)
        else:
            self.feedback.pushInfo(message)


class ThrustmapAlgorithm(QgsProcessingAlgorithm):
    """A processing algorithm wrapping one declared ``thrustmap.tools.Tool``.

    Parameters
    ----------
    tool : thrustmap.tools.Tool
        The declaration; its inputs become feature sources filtered by
        geometry, its parameters typed parameters, its outputs feature sinks
        named ``out_<output name>``.

    Raises
    ------
    ValueError
        When two inputs, parameters or outputs of the tool would share a name.
    """

    def __init__(self, tool):
        super().__init__()
        self._tool = tool
        names = [i.name for i in tool.inputs] + [p.name for p in tool.params]
        names += [OUTPUT_PREFIX + o.name for o in tool.outputs]
        clashes = sorted({n for n in names if names.count(n) > 1})
        if clashes:
            raise ValueError(f"tool {tool.name!r}: names used twice: {', '.join(clashes)}")

    @property
    def tool(self):
        """The wrapped declaration."""
        return self._tool

    def createInstance(self):  # noqa: N802 - GIS API names
        return ThrustmapAlgorithm(self._tool)

    def name(self):
        return self._tool.name

    def displayName(self):  # noqa: N802
        return _label(self._tool.name)

    def group(self):
        return _label(self._tool.group)

    def groupId(self):  # noqa: N802
        return self._tool.group

    def shortDescription(self):  # noqa: N802
        return self._tool.summary

    def shortHelpString(self):  # noqa: N802
        tool = self._tool
        parts = [f"<p>{html.escape(tool.summary)}</p>"]
        for title, items in (
            ("Inputs", [(i.name, f"{i.geometry}; {i.help}") for i in tool.inputs]),
            ("Parameters", [(p.name, p.help) for p in tool.params]),
            ("Outputs", [(o.name, f"{o.geometry}; {o.help}") for o in tool.outputs]),
        ):
            if items:
                rows = "".join(
                    f"<li><b>{html.escape(n)}</b>: {html.escape(h)}</li>" for n, h in items
                )
                parts.append(f"<h3>{title}</h3><ul>{rows}</ul>")
        parts.append(
            f"<p>From {html.escape(tool.origin)}. Results are interpretive aids, to be reviewed by "
            "a qualified geologist; local codes and licensed practice prevail.</p>"
        )
        return "".join(parts)

    def initAlgorithm(self, config=None):  # noqa: N802
        for layer in self._tool.inputs:
            definition = QgsProcessingParameterFeatureSource(
                layer.name,
                _label(layer.name),
                [LAYER_TYPES[layer.geometry]],
                None,
                layer.optional,
            )
            definition.setHelp(layer.help)
            self.addParameter(definition)
        for param in self._tool.params:
            self.addParameter(_parameter_definition(param))
        for output in self._tool.outputs:
            definition = QgsProcessingParameterFeatureSink(
                OUTPUT_PREFIX + output.name, _label(output.name), LAYER_TYPES[output.geometry]
            )
            definition.setHelp(output.help)
            self.addParameter(definition)

    def _key_fields(self, parameters, name, context):
        """Fields holding the data provider's own feature ids (a GeoPackage's ``fid``)."""
        layer = self.parameterAsVectorLayer(parameters, name, context)
        if layer is None:
            return []
        keys = layer.dataProvider().pkAttributeIndexes()
        return [layer.fields().at(i).name() for i in keys]

    def _param_value(self, param, parameters, context):
        if parameters.get(param.name) is None:
            return param.default
        if param.type == "float":
            return self.parameterAsDouble(parameters, param.name, context)
        if param.type == "int":
            return self.parameterAsInt(parameters, param.name, context)
        if param.type == "bool":
            return self.parameterAsBoolean(parameters, param.name, context)
        if param.type == "choice":
            return self.parameterAsEnumString(parameters, param.name, context)
        return self.parameterAsString(parameters, param.name, context)

    def processAlgorithm(self, parameters, context, feedback):  # noqa: N802
        tool = self._tool
        inputs = {}
        for layer in tool.inputs:
            source = self.parameterAsSource(parameters, layer.name, context)
            if source is None:
                if not layer.optional:
                    raise QgsProcessingException(self.invalidSourceError(parameters, layer.name))
                inputs[layer.name] = None
                continue
            inputs[layer.name] = source_to_frame(
                source,
                geometry=layer.geometry,
                skip_fields=self._key_fields(parameters, layer.name, context),
                feedback=feedback,
            )
            feedback.pushInfo(f"{layer.name}: {len(inputs[layer.name])} features")
        if feedback.isCanceled():
            return {}
        params = {p.name: self._param_value(p, parameters, context) for p in tool.params}
        feedback.setProgress(10)
        result = self._run(inputs, params, feedback)
        feedback.setProgress(80)
        outputs = {}
        for output in tool.outputs:
            key = OUTPUT_PREFIX + output.name
            fields, features, wkb_type, crs = frame_to_features(
                result[output.name], geometry=output.geometry
            )
            sink, destination = self.parameterAsSink(
                parameters, key, context, fields, wkb_type, crs
            )
            if sink is None:
                raise QgsProcessingException(self.invalidSinkError(parameters, key))
            if not sink.addFeatures(features, QgsFeatureSink.FastInsert):
                raise QgsProcessingException(f"{output.name}: {sink.lastError()}")
            outputs[key] = destination
            feedback.pushInfo(f"{output.name}: {len(features)} features written")
        feedback.setProgress(100)
        return outputs

    def _run(self, inputs, params, feedback):
        handler = _FeedbackHandler(feedback)
        logger = logging.getLogger("thrustmap")
        logger.addHandler(handler)
        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                result = self._tool.run(inputs, params)
        except ThrustmapError as error:
            raise QgsProcessingException(f"{self._tool.name}: {error}") from error
        finally:
            logger.removeHandler(handler)
        for warning in caught:
            feedback.pushWarning(f"{warning.category.__name__}: {warning.message}")
        return result
