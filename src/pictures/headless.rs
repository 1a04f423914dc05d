//! An OpenGL 3.3 context with no window and no surface (EGL surfaceless; Mesa's CPU rasteriser on
//! machines without a GPU), for drawing pictures from the command line and in tests.

use std::sync::Arc;

use glutin::api::egl::context::PossiblyCurrentContext;

use crate::view::renderer::Renderer;

/// A renderer on a surfaceless context, current on the thread that made it for its lifetime.
pub struct Headless {
    /// The renderer, drawing into offscreen images.
    pub renderer: Renderer,
    _context: PossiblyCurrentContext,
}

impl Headless {
    /// Makes the context on the first EGL device (Debian: libegl1 and libgl1-mesa-dri).
    pub fn new() -> Result<Headless, String> {
        use glutin::api::egl::{device::Device, display::Display};
        use glutin::config::{ConfigSurfaceTypes, ConfigTemplateBuilder};
        use glutin::context::{ContextApi, ContextAttributesBuilder, Version};
        use glutin::prelude::*;

        let fail = |what: &str| {
            let what = what.to_string();
            move |e: glutin::error::Error| format!("cannot draw pictures: {what}: {e}")
        };
        let device = Device::query_devices()
            .map_err(fail("no EGL (Debian: libegl1 and libgl1-mesa-dri)"))?
            .next()
            .ok_or("cannot draw pictures: no EGL device")?;
        // SAFETY: no native display is passed; the device comes from EGL itself.
        let display =
            unsafe { Display::with_device(&device, None) }.map_err(fail("EGL display"))?;
        let template = ConfigTemplateBuilder::new()
            .with_surface_type(ConfigSurfaceTypes::empty())
            .build();
        // SAFETY: the template asks for no surface at all.
        let config = unsafe { display.find_configs(template) }
            .map_err(fail("EGL configs"))?
            .next()
            .ok_or("cannot draw pictures: no EGL config")?;
        let attributes = ContextAttributesBuilder::new()
            .with_context_api(ContextApi::OpenGl(Some(Version::new(3, 3))))
            .build(None);
        // SAFETY: the config belongs to this display.
        let context = unsafe { display.create_context(&config, &attributes) }
            .map_err(fail("OpenGL 3.3 context"))?
            .make_current_surfaceless()
            .map_err(fail("surfaceless context"))?;
        // SAFETY: the context is current on this thread and outlives every call made through `gl`.
        let gl = unsafe {
            three_d::context::Context::from_loader_function_cstr(|name| {
                display.get_proc_address(name).cast()
            })
        };
        let context3d = three_d::Context::from_gl_context(Arc::new(gl))
            .map_err(|e| format!("cannot draw pictures: {e}"))?;
        Ok(Headless {
            renderer: Renderer::new(context3d),
            _context: context,
        })
    }
}
