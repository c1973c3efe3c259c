"""One processing algorithm per declared thrustmap tool, generated from its declaration.

The algorithm only translates: features in -> (Geo)DataFrames -> ``tool.run`` ->
(Geo)DataFrames and files -> feature sinks and files. Parameter types, ranges,
defaults, choices and help all come from the declaration, so the GIS refuses
bad values itself.
"""

import contextlib
import html
import logging
import warnings
from pathlib import Path

from qgis.core import (
    QgsFeatureSink,
    QgsProcessing,
    QgsProcessingAlgorithm,
    QgsProcessingException,
    QgsProcessingParameterBoolean,
    QgsProcessingParameterCrs,
    QgsProcessingParameterEnum,
    QgsProcessingParameterFile,
    QgsProcessingParameterFeatureSink,
    QgsProcessingParameterFeatureSource,
    QgsProcessingParameterFileDestination,
    QgsProcessingParameterFolderDestination,
    QgsProcessingParameterNumber,
    QgsProcessingParameterString,
    QgsProviderRegistry,
)

from thrustmap.errors import ThrustmapError
from thrustmap.io.atomic import write_file
from thrustmap.io.sources import working_crs
from thrustmap.tools.declare import FileOutput
from thrustmap.tools.options import CRS
from thrustmap.tools.runner import collect_outputs

from .convert import frame_to_features, source_to_frame, to_pyproj_crs

__all__ = ["ThrustmapAlgorithm", "OUTPUT_PREFIX", "LAYER_TYPES", "WORKING_CRS"]

# Output parameters are named ``out_<declared name>``: a tool may read and write
# layers of the same name (thrust_traces in, thrust_traces out).
OUTPUT_PREFIX = "out_"
# The shared working-CRS option, offered by every algorithm as on the command line.
WORKING_CRS = CRS.name

LAYER_TYPES = {
    "point": QgsProcessing.TypeVectorPoint,
    "line": QgsProcessing.TypeVectorLine,
    "polygon": QgsProcessing.TypeVectorPolygon,
    "table": QgsProcessing.TypeVector,
    "any": QgsProcessing.TypeVectorAnyGeometry,
}


def _label(name, unit=None):
    text = name.replace("_", " ").replace("-", " ")
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
    elif param.type == "file":
        definition = QgsProcessingParameterFile(
            param.name, label, QgsProcessingParameterFile.File, "", param.default, optional
        )
    else:
        definition = QgsProcessingParameterString(param.name, label, param.default, False, optional)
    definition.setHelp(param.help)
    return definition


def _file_filter(output):
    suffix = Path(output.filename).suffix.lstrip(".")
    return f"{suffix.upper()} files (*.{suffix})" if suffix else ""


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


@contextlib.contextmanager
def _offscreen_figures():
    """Draw figures with Agg while a tool runs, whatever plotting backend the GIS set up."""
    import matplotlib.pyplot as plt

    previous = plt.get_backend()
    if previous.lower() == "agg":
        yield
        return
    plt.switch_backend("agg")
    try:
        yield
    finally:
        plt.switch_backend(previous)


class ThrustmapAlgorithm(QgsProcessingAlgorithm):
    """A processing algorithm wrapping one declared ``thrustmap.tools.Tool``.

    Parameters
    ----------
    tool : thrustmap.tools.Tool
        The declaration. Its inputs become feature sources filtered by
        geometry, its parameters typed parameters, its layer outputs feature
        sinks and its file outputs file or folder destinations, each output
        named ``out_<output name>``. Every algorithm also offers the shared
        working CRS (``crs``) the spatial inputs are reprojected to, as the
        command line does.

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
        if WORKING_CRS not in names:
            names.append(WORKING_CRS)
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

    def flags(self):
        flags = super().flags()
        if self._writes_files():
            # Figures are drawn with the plotting library's global state: keep them
            # on the GIS's main thread.
            flags |= QgsProcessingAlgorithm.FlagNoThreading
        return flags

    def _writes_files(self):
        return any(isinstance(o, FileOutput) for o in self._tool.outputs)

    def shortHelpString(self):  # noqa: N802
        tool = self._tool
        parts = [f"<p>{html.escape(tool.summary)}</p>"]
        outputs = [
            (
                o.name,
                f"{o.filename}; {o.help}"
                if isinstance(o, FileOutput)
                else f"{o.geometry}; {o.help}",
            )
            for o in tool.outputs
        ]
        for title, items in (
            ("Inputs", [(i.name, f"{i.geometry}; {i.help}") for i in tool.inputs]),
            ("Parameters", [(p.name, p.help) for p in tool.params]),
            ("Outputs", outputs),
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
        declared_crs = None
        for param in self._tool.params:
            if param.name == WORKING_CRS:
                declared_crs = param
                continue
            self.addParameter(_parameter_definition(param))
        crs = QgsProcessingParameterCrs(
            WORKING_CRS, "Working CRS", declared_crs.default if declared_crs else None, True
        )
        crs.setHelp((declared_crs or CRS).help)
        self.addParameter(crs)
        for output in self._tool.outputs:
            key = OUTPUT_PREFIX + output.name
            if isinstance(output, FileOutput) and output.is_folder:
                definition = QgsProcessingParameterFolderDestination(key, _label(output.name))
            elif isinstance(output, FileOutput):
                definition = QgsProcessingParameterFileDestination(
                    key, _label(output.name), _file_filter(output)
                )
            else:
                definition = QgsProcessingParameterFeatureSink(
                    key, _label(output.name), LAYER_TYPES[output.geometry]
                )
            definition.setHelp(output.help)
            self.addParameter(definition)

    def _layer_origin(self, parameters, name, context):
        """(file, layer name, key fields) of an input layer, as thrustmap's readers name them.

        The file is None for a layer held in memory; the key fields hold the data
        provider's own feature ids (a GeoPackage's ``fid``), left out of the table.
        """
        layer = self.parameterAsVectorLayer(parameters, name, context)
        if layer is None:
            return None, None, []
        keys = [layer.fields().at(i).name() for i in layer.dataProvider().pkAttributeIndexes()]
        parts = QgsProviderRegistry.instance().decodeUri(layer.providerType(), layer.source())
        if parts.get("path"):
            return parts["path"], parts.get("layerName") or None, keys
        return None, layer.name(), keys

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
        if param.type == "file":
            return self.parameterAsFile(parameters, param.name, context)
        return self.parameterAsString(parameters, param.name, context)

    def _working_crs(self, parameters, context):
        """The chosen working CRS (checked to be projected), or None."""
        if parameters.get(WORKING_CRS) in (None, ""):
            return None
        crs = self.parameterAsCrs(parameters, WORKING_CRS, context)
        if not crs.isValid():
            raise QgsProcessingException(
                f"{WORKING_CRS}: {parameters[WORKING_CRS]!r} is not a CRS the GIS knows"
            )
        try:
            working_crs(to_pyproj_crs(crs))
        except ThrustmapError as error:
            raise QgsProcessingException(f"{self._tool.name}: {error}") from error
        return crs

    def processAlgorithm(self, parameters, context, feedback):  # noqa: N802
        tool = self._tool
        crs = self._working_crs(parameters, context)
        inputs = {}
        for layer in tool.inputs:
            source = self.parameterAsSource(parameters, layer.name, context)
            if source is None:
                if not layer.optional:
                    raise QgsProcessingException(self.invalidSourceError(parameters, layer.name))
                inputs[layer.name] = None
                continue
            path, layer_name, keys = self._layer_origin(parameters, layer.name, context)
            frame = source_to_frame(
                source,
                geometry=layer.geometry,
                skip_fields=keys,
                to_crs=crs,
                transform_context=context.transformContext(),
                feedback=feedback,
            )
            # As read_source records them, so that messages name the file and layer.
            frame.attrs["source"] = path
            frame.attrs["layer"] = layer_name
            try:
                layer.check(frame, source=path, layer=layer_name)
            except ThrustmapError as error:
                raise QgsProcessingException(f"{tool.name}: {error}") from error
            inputs[layer.name] = frame
            feedback.pushInfo(f"{layer.name}: {len(frame)} features")
        if feedback.isCanceled():
            return {}
        params = {p.name: self._param_value(p, parameters, context) for p in tool.params}
        if crs is not None and any(p.name == WORKING_CRS for p in tool.params):
            params[WORKING_CRS] = to_pyproj_crs(crs).to_string()
        feedback.setProgress(10)
        outputs = {}
        with self._reporting(feedback):
            result = tool.run(inputs, params)
            # Checks what came back; file outputs keyed by output name (folders by name/).
            _, files = collect_outputs(
                tool,
                result,
                names={
                    o.name: f"{o.name}/" if o.is_folder else o.name
                    for o in tool.outputs
                    if isinstance(o, FileOutput)
                },
            )
            feedback.setProgress(80)
            for output in tool.outputs:
                key = OUTPUT_PREFIX + output.name
                if isinstance(output, FileOutput):
                    outputs[key] = self._write_files(output, files, parameters, key, context)
                else:
                    outputs[key] = self._write_layer(
                        output, result[output.name], parameters, key, context
                    )
                feedback.pushInfo(f"{output.name}: {outputs[key]}")
        feedback.setProgress(100)
        return outputs

    def _write_layer(self, output, frame, parameters, key, context):
        fields, features, wkb_type, crs = frame_to_features(frame, geometry=output.geometry)
        sink, destination = self.parameterAsSink(parameters, key, context, fields, wkb_type, crs)
        if sink is None:
            raise QgsProcessingException(self.invalidSinkError(parameters, key))
        if not sink.addFeatures(features, QgsFeatureSink.FastInsert):
            raise QgsProcessingException(f"{output.name}: {sink.lastError()}")
        return destination

    def _write_files(self, output, files, parameters, key, context):
        """Write one file output (or the files of a folder output) where the user chose."""
        target = Path(self.parameterAsFileOutput(parameters, key, context))
        if output.is_folder:
            prefix = f"{output.name}/"
            for name, content in files.items():
                if name.startswith(prefix):
                    write_file(target / name[len(prefix) :], content, overwrite=True)
        else:
            write_file(target, files[output.name], overwrite=True)
        return str(target)

    @contextlib.contextmanager
    def _reporting(self, feedback):
        """thrustmap's log and warnings to the feedback panel, its errors as the GIS's errors.

        Figures (drawn when file outputs are written) use the off-screen backend.
        """
        handler = _FeedbackHandler(feedback)
        logger = logging.getLogger("thrustmap")
        logger.addHandler(handler)
        figures = _offscreen_figures() if self._writes_files() else contextlib.nullcontext()
        try:
            with warnings.catch_warnings(record=True) as caught, figures:
                warnings.simplefilter("always")
                try:
                    yield
                finally:
                    for warning in caught:
                        feedback.pushWarning(f"{warning.category.__name__}: {warning.message}")
        except ThrustmapError as error:
            raise QgsProcessingException(f"{self._tool.name}: {error}") from error
        finally:
            logger.removeHandler(handler)
